"""Column reads: one species' stored lines as numpy arrays, only the columns a view draws.

Reading 10^4 lines as ORM objects costs tens of milliseconds; the same lines as a
few columns of plain tuples cost a few. Callers (the service layer's read cache)
filter, sort and page the arrays with numpy.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from sqlalchemy import select
from sqlalchemy.orm import Session, aliased

from levels.store.schema import Level, Line

#: columns of :func:`species_line_columns`, in order (the line-list row of ``queries.line_row`` but the names)
#: the quantum numbers of a line's two levels that a line row carries as values (2J, parity +1/-1, and 2S+1 and
#: L of an LS term; None where the level has none), so no reader parses them back out of the labels
LINE_LEVEL_VALUE_KEYS = ("lower_two_j", "upper_two_j", "lower_parity", "upper_parity", "lower_multiplicity",
                         "upper_multiplicity", "lower_L", "upper_L")
LINE_ARRAY_COLUMNS = ("id", "dataset_id", "lower_id", "upper_id", "multipole", "wavenumber_cm1", "vacuum_nm",
                      "air_nm", "a_per_s", "f_abs", "line_strength_au", "unc_nm", "observed_nm", "medium",
                      "intensity", "note", "lower", "upper", "lower_cm1", "upper_cm1", "g_lower", "g_upper",
                      *LINE_LEVEL_VALUE_KEYS)
_FLOAT = ("wavenumber_cm1", "vacuum_nm", "air_nm", "a_per_s", "f_abs", "line_strength_au", "unc_nm", "observed_nm",
          "intensity", "lower_cm1", "upper_cm1")
_INT = ("id", "dataset_id", "lower_id", "upper_id", "g_lower", "g_upper")


def species_line_columns(session: Session, species_id: int, dataset_ids: Sequence[int]) -> dict[str, np.ndarray]:
    """The stored lines of one species in the given datasets, as arrays (NULL numbers become NaN).

    Parameters
    ----------
    session : Session
        An open session (the caller owns the transaction).
    species_id : int
        The species.
    dataset_ids : sequence of int
        Datasets whose lines are read.

    Returns
    -------
    dict of str to numpy.ndarray
        :data:`LINE_ARRAY_COLUMNS`: ids and statistical weights (int64); ``multipole``, ``medium``,
        ``note``, the ``lower`` and ``upper`` level labels and the levels' quantum numbers
        (:data:`LINE_LEVEL_VALUE_KEYS`; object, as stored, None for NULL); wavenumber and level
        energies (cm-1), wavelengths and their uncertainty (nm), Einstein A (s-1), f, S (atomic units)
        and intensity as float64 with NaN for NULL; ordered by line id.
    """
    lower, upper = aliased(Level), aliased(Level)
    query = (select(Line.id, Line.dataset_id, Line.lower_id, Line.upper_id, Line.multipole, Line.wavenumber_cm1,
                    Line.vacuum_nm, Line.air_nm, Line.a_per_s, Line.f_abs, Line.line_strength_au, Line.unc_nm,
                    Line.observed_nm, Line.medium, Line.intensity, Line.note, lower.label, upper.label,
                    lower.energy_cm1, upper.energy_cm1, lower.g, upper.g, lower.two_j, upper.two_j, lower.parity,
                    upper.parity, lower.multiplicity, upper.multiplicity, lower.big_l, upper.big_l)
             .join(lower, lower.id == Line.lower_id).join(upper, upper.id == Line.upper_id)
             .where(Line.species_id == species_id, Line.dataset_id.in_(list(dataset_ids)))
             .order_by(Line.id))
    rows = session.execute(query).all() if dataset_ids else []
    columns = list(zip(*rows)) if rows else [()] * len(LINE_ARRAY_COLUMNS)
    out: dict[str, np.ndarray] = {}
    for name, values in zip(LINE_ARRAY_COLUMNS, columns):
        if name in _FLOAT:
            out[name] = np.array([np.nan if v is None else v for v in values], dtype=float)
        elif name in _INT:
            out[name] = np.array(values, dtype=np.int64)
        else:
            array = np.empty(len(values), dtype=object)
            array[:] = list(values)
            out[name] = array
    return out


def level_values(lower: Level, upper: Level) -> dict[str, int | None]:
    """:data:`LINE_LEVEL_VALUE_KEYS` of a line between ``lower`` and ``upper``."""
    return {"lower_two_j": lower.two_j, "upper_two_j": upper.two_j, "lower_parity": lower.parity,
            "upper_parity": upper.parity, "lower_multiplicity": lower.multiplicity,
            "upper_multiplicity": upper.multiplicity, "lower_L": lower.big_l, "upper_L": upper.big_l}
