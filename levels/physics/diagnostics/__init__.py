"""From a measured spectrum to plasma parameters.

Peak finding and profile fitting, wavelength calibration (dispersion
polynomials), Boltzmann and Saha-Boltzmann plots, Stark electron densities of
hydrogen Balmer lines; each module names its published source.
"""
