"""One-electron ions to QED accuracy: levels, radial integrals and radiative rates.

- `dirac`: Dirac energy, reduced mass and recoil, self-energy, vacuum polarisation, two-loop terms, and the theory
  uncertainty from the size of the terms left out (Mohr, Taylor & Newell, CODATA adjustments 2008 and 2012;
  Bethe logarithms of Drake & Swainson 1990).
- `nuclear`: nuclear masses and charge radii, the finite-size shift (Angeli & Marinova 2013).
- `radial`: radial dipole integrals by a downward recurrence in l (Storey & Hummer 1991); Gordon's closed form
  (Gordon 1929).
- `rates`: line strengths with 6j factors, f, A, lifetimes, branching, 2s two-photon decay (Condon & Shortley 1935;
  Bethe & Salpeter 1957).
- `bound_g`: the g-factor of a bound electron (Breit 1928).
- `hydrogenic`: assembles a complete one-electron ion from the modules above.
"""
