"""Generate INVENTED measured lines and peaks of the demo sample 'li-cell-amber'.

Reads seed_data/demo/sample-li-cell.csv (itself invented), takes E1 pairs among
its levels, and writes air wavelengths with invented noise and uncertainties
(lines-li-cell.csv) plus a list of unlabelled peaks with two invented impurity
peaks (peaks-li-cell.csv). Nothing here is a measurement.
Run: python seed_data/demo/generate_li_lines.py
"""

import csv
from pathlib import Path

import numpy as np

from levels.physics.lines.air import vacuum_to_air

HERE = Path(__file__).resolve().parent
rng = np.random.default_rng(7070)

rows = []
with open(HERE / "sample-li-cell.csv", encoding="utf-8") as handle:
    body = [line for line in handle if not line.startswith("#")]
for rec in csv.DictReader(body):
    rows.append(rec)


def label(rec):
    return f"{rec['configuration']} {rec['term']}{rec['j']}"


levels = {label(r): float(r["energy_cm1"]) for r in rows}
pairs = []
for a in rows:
    for b in rows:
        la, lb = a["configuration"][-1], b["configuration"][-1]
        if (la, lb) in (("s", "p"), ("p", "d")) and levels[label(b)] > levels[label(a)]:
            ja, jb = eval(a["j"]), eval(b["j"])  # J values written as fractions in the invented file
            if abs(ja - jb) <= 1:
                pairs.append((label(a), label(b)))
pairs = [p for p in pairs if 200 < 1e7 / (levels[p[1]] - levels[p[0]]) < 1200]
chosen = [pairs[i] for i in sorted(rng.choice(len(pairs), size=min(40, len(pairs)), replace=False))]

lines_out = ["# INVENTED DEMO DATA - not measurements of any real sample.",
             "# Lines of the invented lithium cell 'li-cell-amber' (generate_li_lines.py).",
             "spectrum,lower,upper,wavelength_nm,medium,unc_nm,intensity"]
peaks_out = ["# INVENTED DEMO DATA - unlabelled peaks of the invented cell 'li-cell-amber', two invented impurity peaks.",
             "peak_nm,medium,unc_nm,intensity"]
for lower, upper in chosen:
    vac = 1e7 / (levels[upper] - levels[lower])
    air = float(vacuum_to_air(vac))
    unc = 0.0004 + 0.000002 * air
    measured = air + rng.normal(0, unc)
    intensity = float(np.round(rng.uniform(5, 1000)))
    lines_out.append(f"Li I,{lower},{upper},{measured:.5f},air,{unc:.5f},{intensity:.0f}")
    peaks_out.append(f"{measured + rng.normal(0, unc):.5f},air,{unc:.5f},{intensity:.0f}")
peaks_out.append("589.41000,air,0.00100,120")
peaks_out.append("777.55000,air,0.00100,40")
(HERE / "lines-li-cell.csv").write_text("\n".join(lines_out) + "\n", encoding="utf-8")
(HERE / "peaks-li-cell.csv").write_text("\n".join(peaks_out) + "\n", encoding="utf-8")
print(f"{len(chosen)} lines, {len(chosen) + 2} peaks")
