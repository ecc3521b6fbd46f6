"""Plasmas in equilibrium and the spectra they emit.

| module | law or method | source |
|---|---|---|
| `equilibrium` | Boltzmann and Saha populations, partition-function cutoffs (Debye-Hückel, | Griem 1997 |
| | Inglis-Teller), emissivity, slab escape | |
| `spectrum` | Doppler, natural and instrument widths; windowed Voigt synthetic spectra | Olivero & Longbothum 1977 |

Out-of-equilibrium discharges are in `levels.physics.discharge`; measured spectra in `levels.physics.diagnostics`.
"""
