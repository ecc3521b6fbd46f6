"""One-electron ions to QED accuracy: levels, radial integrals and radiative rates.

| module | law or method | source |
|---|---|---|
| `dirac` | Dirac energy, reduced mass and recoil, self-energy, vacuum polarisation, two-loop terms, and the | Mohr, Taylor & Newell (CODATA adjustments 2008, 2012); |
| | theory uncertainty from the size of the terms left out | Drake & Swainson 1990 (Bethe logarithms) |
| `nuclear` | nuclear masses and charge radii, finite-size shift | Angeli & Marinova 2013 |
| `radial` | radial dipole integrals by downward recurrence in l; Gordon's closed form | Storey & Hummer 1991; Gordon 1929 |
| `rates` | line strengths with 6j factors, f, A, lifetimes, branching, 2s two-photon decay | Condon & Shortley 1935; |
| | | Bethe & Salpeter 1957 |
| `bound_g` | g-factor of a bound electron | Breit 1928 |
| `hydrogenic` | assembles a complete one-electron ion from the modules above | - |
"""
