"""Generate the INVENTED demo spectra of the spectrum-analysis commands (not measurements of anything).

* ``frame-hd-lamp.csv``: a pixel frame of the invented hydrogen-deuterium lamp
  (lamp-hd-calibration.json) on the fictional bench grating spectrometer, for ``levels calibrate``;
* ``frame-h-arc.csv``: a pixel frame of an invented hydrogen arc 'arc-heron' on the same spectrometer,
  for ``levels peaks --calibration`` and ``levels diagnose``.

The spectrometer's dispersion, the lamp and arc conditions and the noise are invented. Line positions
and strengths come from the project's own physics (levels.physics.one_electron.hydrogenic: computed H I and D I;
levels.physics.plasma.equilibrium: Boltzmann populations; levels.physics.plasma.spectrum: line shapes). The arc's Balmer
lines carry the Stark widths of levels.physics.diagnostics.stark at the invented ne; the widths given to
H-gamma and H-delta are invented (taken equal to H-beta's).
Run: python seed_data/demo/generate_spectra.py   (writes both files next to this script)
"""

from pathlib import Path

import numpy as np
from scipy.constants import physical_constants as pc

from levels.physics.one_electron import hydrogenic
from levels.physics.plasma import equilibrium as plasma
from levels.physics.plasma import spectrum as shapes
from levels.physics.diagnostics import stark

HERE = Path(__file__).resolve().parent
#: invented dispersion of the fictional spectrometer: nm (air) at pixel p, ascending powers
DISPERSION = [395.0, 0.0225, -2.0e-7, 4.0e-12]
PIXELS = 13000
INSTRUMENT_FWHM_PX = 3.0
rng = np.random.default_rng(20261204)


def balmer(mass_u: float, te_k: float):
    model = hydrogenic.compute(1, nuclear_mass_u=mass_u, n_max=9, fine_structure=False)
    lines = model.lines
    pop = plasma.boltzmann_populations(model.energy_cm1, model.g, te_k)
    sel = (model.n[lines["lower"]] == 2) & (lines["air_nm"] > 390) & (lines["air_nm"] < 665)
    power = plasma.line_emissivity(pop[lines["upper"][sel]], lines["a_per_s"][sel], lines["wavenumber_cm1"][sel])
    return lines["air_nm"][sel], power, model.n[lines["upper"][sel]]


def frame(centres_nm, powers, lorentz_nm, scale, floor, tgas_k, mass_u):
    p = np.arange(PIXELS, dtype=float)
    wl = np.polynomial.polynomial.polyval(p, DISPERSION)
    slope = np.interp(centres_nm, wl, np.gradient(wl))
    centre_px = np.interp(centres_nm, wl, p)
    lorentz_px = np.asarray(lorentz_nm) / slope
    gauss_px = np.hypot(INSTRUMENT_FWHM_PX, shapes.doppler_fwhm_nm(centres_nm, tgas_k, mass_u) / slope)
    y = shapes.synthetic_spectrum(p, centre_px, powers, gauss_px, lorentz_px)
    y = y / y.max() * scale + floor
    unc = np.sqrt(y)  # invented shot noise, in counts
    return p, np.round(y + rng.normal(0, 1, y.size) * unc, 1), np.round(unc, 2)


def write(name: str, header: str, p, y, unc) -> None:
    lines = [header.rstrip(), "pixel,intensity,intensity_unc"]
    lines += [f"{int(a)},{b:.1f},{c:.2f}" for a, b, c in zip(p, y, unc)]
    (HERE / name).write_text("\n".join(lines) + "\n", encoding="utf-8")


# --- the lamp: H and D, 1.1 eV, narrow lines (Doppler at 700 K is below the instrument width)
h_nm, h_pow, _ = balmer(pc["proton mass in u"][0], 12765.0)
d_nm, d_pow, _ = balmer(pc["deuteron mass in u"][0], 12765.0)
p, y, unc = frame(
    np.concatenate([h_nm, d_nm]),
    np.concatenate([h_pow, d_pow]),
    0.0,
    40000.0,
    200.0,
    700.0,
    np.concatenate([np.full(h_nm.size, 1.008), np.full(d_nm.size, 2.014)]),
)
write(
    "frame-hd-lamp.csv",
    "# INVENTED DEMO DATA - not a measurement. Pixel frame of the invented hydrogen-deuterium lamp (lamp-hd-calibration.json)\n"
    "# on the fictional bench grating spectrometer; made by seed_data/demo/generate_spectra.py.\n",
    p,
    y,
    unc,
)

# --- the arc: hydrogen at Te 12,000 K, ne 2e22 m-3 and a gas temperature of 3,000 K (all invented)
NE = 2e22
a_nm, a_pow, n_up = balmer(pc["proton mass in u"][0], 12000.0)
width = np.where(n_up == 3, stark.stark_fwhm_nm("H-alpha", NE), stark.stark_fwhm_nm("H-beta", NE))
p, y, unc = frame(a_nm, a_pow, width, 30000.0, 150.0, 3000.0, 1.008)
write(
    "frame-h-arc.csv",
    "# INVENTED DEMO DATA - not a measurement. Pixel frame of the invented hydrogen arc 'arc-heron' (Te 12000 K,\n"
    "# ne 2e22 m-3, Tgas 3000 K, invented) on the fictional bench grating spectrometer;\n"
    "# made by seed_data/demo/generate_spectra.py.\n",
    p,
    y,
    unc,
)
