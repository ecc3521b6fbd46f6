"""Discharges out of equilibrium: collisional-radiative balance and line broadening.

One module per process (electron-impact excitation, ionization,
recombination, escape factors, pressure broadening) and the steady-state
solver; each module names its published source in its docstring.
"""
