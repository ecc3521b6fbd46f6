"""From levels to lines and back: selection rules, Ritz combination, air wavelengths, series limits.

| module | law or method | source |
|---|---|---|
| `selection` | E1/M1/E2 selection rules, LS flags, vectorised candidate pairs | Condon & Shortley 1935 |
| `combination` | the Ritz combination principle: lines from level pairs with propagated uncertainties | Ritz 1908 |
| `air` | refractive index of air, vacuum to air wavelengths | Edlén 1966; Ciddor 1996; Morton 2000 |
| `series` | extended Ritz formula fit of series limits | Ritz 1908; Edlén 1964 |
| `ritz` | level optimisation from measured lines (weighted linear least squares) | common practice, no source |
| `lande` | Landé g in LS coupling | Landé 1923 |
"""
