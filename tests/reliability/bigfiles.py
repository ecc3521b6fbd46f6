"""Generated test files for the kill tests: many levels of six invented Rydberg atoms, and 100,000 lines.

The energies are INVENTED (a Rydberg formula with made-up quantum defects);
they only have to be valid, distinct and give well-separated pairs.
"""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path

import numpy as np

#: (spectrum, core configuration) of the invented atoms
ATOMS = (("Na I", "1s2.2s2.2p6"), ("K I", "1s2.2s2.2p6.3s2.3p6"), ("Rb I", None), ("Cs I", None),
         ("Li I", "1s2"), ("Fr I", None))
#: invented quantum defects and fine-structure offsets (cm-1 per unit of J) per l
DEFECTS = {0: 1.37, 1: 0.88, 2: 0.013, 3: 0.0016}
TERMS = {0: ("2S", ("1/2",)), 1: ("2P°", ("1/2", "3/2")), 2: ("2D", ("3/2", "5/2")), 3: ("2F°", ("5/2", "7/2"))}
RYDBERG = 109737.0  # cm-1, a round invented value for the invented atoms
LINES = 100_000


def atom_levels(index: int, n_max: int = 52) -> list[tuple[str, str, str, str, float]]:
    """(spectrum, configuration, term, j, energy) rows of invented atom ``index``, ground first at 0."""
    spectrum, core = ATOMS[index]
    n0 = 3 + index % 3
    limit = 40000.0 + 1000.0 * index
    rows = []
    for n in range(n0, n_max + 1):
        for l_value, (term, js) in TERMS.items():
            if l_value >= n:
                continue
            for k, j in enumerate(js):
                energy = limit - RYDBERG / (n - DEFECTS[l_value] - 0.01 * index) ** 2 + 0.37 * k * l_value / n
                letter = "spdf"[l_value]
                config = f"{n}{letter}" if core is None else f"{core}.{n}{letter}"
                rows.append((spectrum, config, term, j, energy))
    ground = min(r[4] for r in rows)
    return [(s, c, t, j, round(e - ground, 4)) for s, c, t, j, e in rows]


def write_levels(path: Path) -> int:
    """The levels file of all invented atoms; return the number of levels."""
    out = ["# INVENTED levels of invented Rydberg atoms (tests/reliability/bigfiles.py)",
           "spectrum,configuration,term,j,energy_cm1"]
    count = 0
    for index in range(len(ATOMS)):
        for row in atom_levels(index):
            out.append(",".join(row[:4]) + f",{row[4]!r}")
            count += 1
    path.write_text("\n".join(out) + "\n", encoding="utf-8")
    return count


def write_lines(path: Path, count: int = LINES) -> int:
    """A measured-lines file of ``count`` E1 pairs (odd-even, at least 1 cm-1 apart) of the invented atoms."""
    out = ["# INVENTED lines between the invented levels (tests/reliability/bigfiles.py)",
           "spectrum,lower,upper,wavelength_nm,medium,unc_nm"]
    written = 0
    for index in range(len(ATOMS)):
        rows = atom_levels(index)
        labels = [f"{c} {t}{j}" for _, c, t, j, _ in rows]
        energy = np.array([r[4] for r in rows])
        odd = np.array(["°" in r[2] for r in rows])
        two_j = np.array([round(2 * float(Fraction(r[3]))) for r in rows])
        for i in np.flatnonzero(~odd):
            for k in np.flatnonzero(odd):
                gap = float(energy[k] - energy[i])
                # E1 selection rules (imports check them): |dJ| <= 1, not J = 0 to J = 0
                if abs(gap) < 1.0 or abs(two_j[k] - two_j[i]) > 2 or two_j[k] == two_j[i] == 0:
                    continue
                lo, up = (i, k) if gap > 0 else (k, i)
                out.append(f"{rows[0][0]},{labels[lo]},{labels[up]},{1e7 / abs(gap)!r},vacuum,0.001")
                written += 1
                if written == count:
                    path.write_text("\n".join(out) + "\n", encoding="utf-8")
                    return written
    raise ValueError(f"the invented atoms give only {written} pairs, fewer than {count}")
