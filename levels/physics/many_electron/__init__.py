"""Rates of many-electron species from their measured levels.

One valence electron outside closed shells (model potential with core
polarisation, Coulomb approximation) and an open core plus one electron in
intermediate coupling (Slater-Condon theory fitted to measured levels). Each
module names its published method in its docstring.
"""
