"""Generate the INVENTED demo sample 'neon glow tube' (seed_data/demo/sample-ne-glow.csv).

Everything here is invented for the demo: the lab, the discharge tube, the
ionization limit, the quantum defects, the Slater and spin-orbit parameters and
the noise. The levels are eigenvalues of the project's own open-core-plus-one-
electron model (levels.physics.many_electron) for these invented parameters,
labelled in jK (Racah) coupling by their leading component, with invented
measurement noise; they are NOT measured values of neon.
Run: python seed_data/demo/generate_ne_glow.py > seed_data/demo/sample-ne-glow.csv
"""

import numpy as np
from scipy.optimize import linear_sum_assignment

from levels.physics.many_electron.intermediate_coupling import energies
from levels.physics.many_electron.slater_condon import configuration_model, open_shells

RYDBERG = 109732.3            # cm-1, Rydberg constant for a core of mass 20 u (rounded)
LIMIT = 173600.0             # invented limit to the ion's 2P3/2 level, cm-1
ZETA_CORE = 530.0            # invented core spin-orbit parameter, cm-1 (ion splitting 3/2 zeta)
DEFECT = {0: 1.31, 1: 0.85, 2: 0.012}                      # invented quantum defects
# invented radial parameters at n* = 2 (cm-1), scaled as (2/n*)^3 for other members
OUTER = {0: {"G1": 1150.0}, 1: {"F2": 2100.0, "G0": 390.0, "G2": 520.0, "zeta_outer": 11.0},
         2: {"F2": 420.0, "G1": 95.0, "G3": 60.0, "zeta_outer": 1.5}}
CONFIGS = [(3, 0), (4, 0), (5, 0), (6, 0), (3, 1), (4, 1), (3, 2), (4, 2)]
rng = np.random.default_rng(20261204)
LETTER = "spd"

rows = [(0.0, "2p6", "1S", "0", None)]
for n, l in CONFIGS:
    model = configuration_model(open_shells(((2, 1, 5), (n, l, 1))))
    nu = n - DEFECT[l]
    e0 = LIMIT + 0.5 * ZETA_CORE - RYDBERG / nu**2
    scale = (2.0 / nu) ** 3
    params = [e0] + [ZETA_CORE if name == "zeta_core" else OUTER[l][name] * scale for name in model.parameters]
    unc = round(0.004 * nu**2, 3)
    odd = "°" if l % 2 == 0 else ""      # 2p5 ns and 2p5 nd are odd, 2p5 np even
    for two_j, (values, vectors) in energies(model, params).items():
        sub = model.subspaces[two_j]
        weights = (sub.jk_vectors.T @ vectors) ** 2           # (jK state, eigenvector)
        states, columns = linear_sum_assignment(-weights)     # one jK label per eigenvector
        for state, column in zip(states, columns):
            two_jc, two_k = sub.jk_labels[state]
            config = f"2p5(2P°{two_jc}/2){n}{LETTER[l]}"
            j = str(two_j // 2) if two_j % 2 == 0 else f"{two_j}/2"
            value = values[column] + rng.normal(0.0, unc)
            rows.append((value, config, f"2[{two_k}/2]{odd}", j, unc))

print("# INVENTED DEMO DATA - not measurements of any real sample.")
print("# Sample 'neon glow tube': a neon glow-discharge tube of the fictional Brightwater Optics Lab; levels from")
print("# the project's own open-core-plus-one-electron model with invented parameters and invented noise")
print("# (seed_data/demo/generate_ne_glow.py); jK (Racah) labels, parent term in the configuration.")
print("# Caution: glow-discharge tubes run at high voltage; follow local electrical codes and licensed practice.")
print('# Series limit for rates: levels limit "Ne I" --series "2p5(2P°3/2)ns 2[3/2]°2"')
print("spectrum,configuration,term,j,energy_cm1,unc_cm1")
for value, config, term, j, unc in sorted(rows, key=lambda r: r[0]):
    print(f"Ne I,{config},{term},{j},{value:.3f},{'' if unc is None else f'{unc:.3f}'}")
