"""Generate the INVENTED demo sample 'li-cell-amber' (seed_data/demo/sample-li-cell.csv).

Everything here is invented for the demo: the lab, the cell, the quantum
defects, the fine-structure splittings and the uncertainties. The levels follow
a Rydberg formula with invented quantum defects so that the series-limit fit
has something realistic to work on; they are NOT measured values of lithium.
Run: python seed_data/demo/generate_li_cell.py > seed_data/demo/sample-li-cell.csv
"""

import numpy as np
import scipy.constants as sc

LIMIT = 43490.0            # invented ionization limit, cm-1
DEFECTS = {0: 0.401, 1: 0.048, 2: 0.0021}   # invented quantum defects per l
SPLIT = {1: 0.335, 2: 0.012}                # invented fine structure at n = 2 (p) / 3 (d), cm-1, scaled as n^-3
M_LI7_U = 7.016003437                        # periodictable atomic mass of Li-7, u (minus electrons below)
rng = np.random.default_rng(20261201)

m_nuc = M_LI7_U - 3 * sc.physical_constants["electron mass in u"][0]
rydberg = sc.Rydberg / 100 / (1 + sc.m_e / (m_nuc * sc.atomic_mass))

rows = []
ground = LIMIT - rydberg / (2 - DEFECTS[0]) ** 2
for l, letter, term_l in ((0, "s", "S"), (1, "p", "P"), (2, "d", "D")):
    for n in range(max(2, l + 1), 13):
        e = LIMIT - rydberg / (n - DEFECTS[l]) ** 2 - ground
        unc = 0.002 * n ** 1.5
        odd = "°" if l % 2 else ""
        if l == 0:
            js = [("1/2", 0.0)]
        else:
            n0 = 2 if l == 1 else 3
            split = SPLIT[l] * (n0 / n) ** 3
            js = [(f"{2 * l - 1}/2", -split * l / (2 * l + 1)), (f"{2 * l + 1}/2", split * (l + 1) / (2 * l + 1))]
        for j, shift in js:
            value = e + shift + rng.normal(0, unc)
            if n == 2 and l == 0:
                value, unc_v = 0.0, None
            else:
                unc_v = unc
            rows.append((value, f"1s2.{n}{letter}", f"2{term_l}{odd}", j, unc_v))

print("# INVENTED DEMO DATA - not measurements of any real sample.")
print("# Sample 'li-cell-amber': a lithium vapour cell of the fictional Brightwater Optics Lab,")
print("# levels from an invented Rydberg model with invented noise (seed_data/demo/generate_li_cell.py).")
print("spectrum,configuration,term,j,energy_cm1,unc_cm1")
for value, config, term, j, unc in sorted(rows):
    print(f"Li I,{config},{term},{j},{value:.4f},{'' if unc is None else f'{unc:.4f}'}")
