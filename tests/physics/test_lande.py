"""Landé g-factors against textbook values."""

import pytest
import scipy.constants as sc

from levels.errors import QuantumNumberError
from levels.physics.lines.lande import G_S, lande_g_ls


@pytest.mark.parametrize("two_s, L, two_j, g", [
    # Bethe & Salpeter 1957, Sec. 47 (g_s = 2): 2S1/2 = 2, 2P1/2 = 2/3, 2P3/2 = 4/3, 2D3/2 = 4/5, 2D5/2 = 6/5
    (1, 0, 1, 2.0), (1, 1, 1, 2 / 3), (1, 1, 3, 4 / 3), (1, 2, 3, 4 / 5), (1, 2, 5, 6 / 5),
    # 3P1 = 3/2, 3P2 = 3/2, 1P1 = 1 (Cowan 1981, Sec. 17-2, g_s = 2)
    (2, 1, 2, 1.5), (2, 1, 4, 1.5), (0, 1, 2, 1.0),
])
def test_textbook_values(two_s, L, two_j, g):
    assert float(lande_g_ls(two_s, L, two_j, g_s=2.0)) == pytest.approx(g, rel=1e-14)


def test_electron_g_factor_from_codata():
    # CODATA electron g-factor through scipy.constants
    assert G_S == pytest.approx(-sc.physical_constants["electron g factor"][0], rel=1e-15)
    assert float(lande_g_ls(1, 0, 1)) == pytest.approx(G_S)


def test_impossible_j_is_refused():
    with pytest.raises(QuantumNumberError):
        lande_g_ls(1, 1, 5)
