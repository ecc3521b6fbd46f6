"""What the store can hold: one table of limits for every column, the same on SQLite and PostgreSQL.

The table :data:`COLUMNS` mirrors :mod:`levels.store.schema` (``tests/io/test_limits.py``
compares the two, so a schema change without a change here fails a test): for
each column its kind, the range of a number (integers must fit PostgreSQL's
32-bit ``INTEGER``, which is narrower than SQLite's 64-bit integers; floats
must be finite and inside the schema's ``-1e300 < x < 1e300`` CHECK bound, or
the tighter bound of the column's own CHECK) and the length of a text
(``String(n)`` is enforced by PostgreSQL, not by SQLite, so a longer text would
be stored on one engine and refused on the other).

The project adds rules of its own on top of the schema's: level energies are
never negative (the ground level is 0), and no text holds a terminal control
character (C0 or C1 controls, ESC and DEL; a tab or line end only where the
column is free text), so nothing stored can rewrite a terminal when printed.

:func:`value_problem` checks one value; :func:`row_problems` a whole row of a
table. The file readers (:mod:`levels.io.records`), the command line, the web
forms, the JSON API, ``levels check`` and ``levels import-store`` (through
:mod:`levels.maintenance`) all apply these rules, so a value that passes
validation can always be stored, and the store never holds one that would not.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass

#: PostgreSQL INTEGER (int4), the narrower of the two engines' integer columns
INT_MIN = -(2 ** 31)
INT_MAX = 2 ** 31 - 1
#: the schema's finite bound on floats (schema.FINITE_LIMIT): -1e300 < x < 1e300
FLOAT_LIMIT = 1e300
#: largest level energy accepted, cm-1 (about 12 MeV; above any bound one-electron state of U91+)
MAX_ENERGY_CM1 = 1e11

#: terminal control characters: C0 (except tab and line ends where allowed), DEL, C1
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")
_CONTROL_STRICT = re.compile(r"[\x00-\x1f\x7f-\x9f]")
#: Unicode characters that change how text is shown (bidi overrides and isolates)
_BIDI = re.compile("[\u202a-\u202e\u2066-\u2069]")


@dataclass(frozen=True)
class Column:
    """Limits of one stored column.

    Attributes
    ----------
    kind : {"int", "float", "text", "datetime"}
    low, high : float or None
        Bounds of a number.
    low_open, high_open : bool
        True when the bound itself is excluded.
    length : int or None
        Most characters of a text (None: unbounded ``Text``).
    multiline : bool
        Free text that may hold tabs and line ends (descriptions, notes, JSON).
    nullable : bool
        Whether the column may be empty (NULL).
    infinity_ok : bool
        Whether +inf is a meaningful value (a lifetime: the level never decays).
    """

    kind: str
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    high_open: bool = False
    length: int | None = None
    multiline: bool = False
    nullable: bool = False
    #: +inf stands for "never" (the lifetime of a ground level)
    infinity_ok: bool = False


def _int(low: int = INT_MIN, high: int = INT_MAX, nullable: bool = False) -> Column:
    return Column("int", low, high, nullable=nullable)


def _float(low: float = -FLOAT_LIMIT, high: float = FLOAT_LIMIT, *, low_open: bool = True, high_open: bool = True,
           nullable: bool = False) -> Column:
    return Column("float", low, high, low_open, high_open, nullable=nullable)


def _text(length: int | None, *, multiline: bool = False) -> Column:
    return Column("text", length=length, multiline=multiline)


_ID = _int(1)
_FK = _int(1)
_FK_NULL = _int(1, nullable=True)
_WHEN = Column("datetime")

#: every column of every table: the store's limits on both engines plus the project's own rules
COLUMNS: dict[str, dict[str, Column]] = {
    "species": {
        "id": _ID, "z": _int(1, 118), "charge": _int(0, 117), "mass_number": _int(1, 300), "name": _text(32),
    },
    "samples": {
        "id": _ID, "name": _text(200), "description": _text(None, multiline=True), "gas_fill": _text(200),
        "pressure_pa": _float(0.0, low_open=False, nullable=True), "current_a": _float(nullable=True),
        "instrument": _text(200), "te_k": _float(0.0, 1e12, nullable=True), "ne_m3": _float(0.0, 1e40, nullable=True),
        "tgas_k": _float(0.0, 1e12, nullable=True), "path_length_m": _float(0.0, 1e6, nullable=True),
        "created_at": _WHEN,
    },
    "datasets": {
        "id": _ID, "name": _text(200), "kind": _text(16), "method": _text(200), "method_version": _text(64),
        "citation": _text(None, multiline=True), "author": _text(200), "description": _text(None, multiline=True),
        "options_json": _text(None, multiline=True), "created_at": _WHEN, "sample_id": _FK_NULL,
        "retracted": _int(0, 1), "role": _text(32), "owner_species_id": _FK_NULL,
        "content_sha256": _text(64),
    },
    "levels": {
        "id": _ID, "dataset_id": _FK, "species_id": _FK, "label": _text(200), "configuration": _text(200),
        "state_configuration": _text(200), "term": _text(32), "two_j": _int(0, INT_MAX - 1, nullable=True),
        "g": _int(1), "parity": _int(-1, 1),
        "energy_cm1": _float(0.0, MAX_ENERGY_CM1, low_open=False, high_open=False),
        "unc_cm1": _float(0.0, MAX_ENERGY_CM1, low_open=False, high_open=False, nullable=True),
        "multiplicity": _int(1, nullable=True), "big_l": _int(0, nullable=True), "n": _int(1, nullable=True),
        "l": _int(0, nullable=True),
        "lifetime_s": Column("float", 0.0, math.inf, True, False, nullable=True, infinity_ok=True),
        "lande_g": _float(-1e3, 1e3, low_open=False, high_open=False, nullable=True),
    },
    "lines": {
        "id": _ID, "dataset_id": _FK, "species_id": _FK, "lower_id": _FK, "upper_id": _FK, "multipole": _text(4),
        "wavenumber_cm1": _float(0.0), "vacuum_nm": _float(0.0), "air_nm": _float(0.0, nullable=True),
        "a_per_s": _float(0.0, low_open=False, nullable=True), "f_abs": _float(0.0, low_open=False, nullable=True),
        "line_strength_au": _float(0.0, low_open=False, nullable=True),
        "unc_nm": _float(0.0, low_open=False, nullable=True), "observed_nm": _float(0.0, nullable=True),
        "medium": _text(8), "intensity": _float(nullable=True), "note": _text(None, multiline=True),
    },
    "ionization_limits": {
        "id": _ID, "dataset_id": _FK, "species_id": _FK, "energy_cm1": _float(0.0),
        "unc_cm1": _float(0.0, low_open=False, nullable=True), "method": _text(200),
    },
    "audit_log": {
        "id": _ID, "at": _WHEN, "actor": _text(200), "action": _text(64), "target": _text(400),
        "detail_json": _text(None, multiline=True),
    },
}


def control_character(text: str, *, multiline: bool = False) -> str | None:
    """The first terminal control character of ``text`` as ``U+001B``, or None.

    Examples
    --------
    >>> control_character("3d 2D5/2"), control_character("red\\x1b[31m")
    (None, 'U+001B')
    >>> control_character("two\\nlines", multiline=True) is None
    True
    """
    found = (_CONTROL if multiline else _CONTROL_STRICT).search(text) or _BIDI.search(text)
    return None if found is None else f"U+{ord(found.group()):04X}"


def text_problem(text: str, length: int | None, *, multiline: bool = False) -> str | None:
    """Why a text cannot be stored (too long, control character), or None.

    Examples
    --------
    >>> text_problem("x" * 201, 200)
    'is 201 characters long; at most 200 are stored'
    >>> text_problem("a\\x9bb", None)
    'holds the control character U+009B; terminal control characters are refused'
    """
    if length is not None and len(text) > length:
        return f"is {len(text)} characters long; at most {length} are stored"
    bad = control_character(text, multiline=multiline)
    if bad:
        return f"holds the control character {bad}; terminal control characters are refused"
    return None


def _bound(value: float, bound: float, is_open: bool, below: bool) -> bool:
    """True when ``value`` breaks ``bound`` (below=True: a lower bound)."""
    if below:
        return value <= bound if is_open else value < bound
    return value >= bound if is_open else value > bound


def number_problem(value: float | int, spec: Column) -> str | None:
    """Why a number cannot be stored in a column of ``spec``, or None.

    Examples
    --------
    >>> number_problem(2 ** 40, COLUMNS["levels"]["n"])
    'is 1099511627776, above the largest storable 2147483647'
    >>> number_problem(-1e301, COLUMNS["levels"]["lande_g"])
    'is -1e+301, below the smallest accepted -1000'
    """
    if isinstance(value, float) and not math.isfinite(value) and not (spec.infinity_ok and value == math.inf):
        return f"is {value!r}, not a finite number"
    if spec.low is not None and _bound(value, spec.low, spec.low_open, True):
        if spec.low == 0 and spec.low_open:
            return f"is {value:g}; it must be greater than zero"
        if spec.low == 0:
            return f"is {value:g}; it must not be negative"
        word = "storable" if spec.kind == "int" and spec.low == INT_MIN else "accepted"
        return f"is {value:g}, below the smallest {word} {spec.low:g}"
    if spec.high is not None and _bound(value, spec.high, spec.high_open, False):
        word = "storable" if spec.kind == "int" and spec.high == INT_MAX or spec.high == FLOAT_LIMIT else "accepted"
        shown = f"{value}" if isinstance(value, int) else f"{value:g}"
        limit = f"{int(spec.high)}" if spec.kind == "int" else f"{spec.high:g}"
        return f"is {shown}, above the largest {word} {limit}"
    return None


def value_problem(table: str, column: str, value) -> str | None:
    """Why ``value`` cannot go into ``table.column``, or None (None values: only where nullable)."""
    spec = COLUMNS[table][column]
    if value is None:
        return None if spec.nullable or spec.kind == "text" else "a value is required"
    if spec.kind == "text":
        if not isinstance(value, str):
            return "must be text"
        return text_problem(value, spec.length, multiline=spec.multiline)
    if spec.kind == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            return "must be a whole number"
        return number_problem(value, spec)
    if spec.kind == "float":
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            return "must be a number"
        return number_problem(float(value), spec)
    return None


def row_problems(table: str, row: Mapping[str, object]) -> list[tuple[str, str]]:
    """``(column, message)`` for every value of ``row`` that ``table`` cannot hold.

    Examples
    --------
    >>> row_problems("levels", {"energy_cm1": -5.0, "label": "ok"})
    [('energy_cm1', 'is -5; it must not be negative')]
    """
    columns = COLUMNS[table]
    out = []
    for name, value in row.items():
        if name in columns:
            problem = value_problem(table, name, value)
            if problem:
                out.append((name, problem))
    return out


#: room left for the `` (2)``, `` (3)`` ... the catalog appends to a taken automatic dataset name
NAME_SUFFIX_ROOM = 6


def automatic_dataset_name_problem(sample: str | None, file_name: str) -> str | None:
    """Why the dataset name made from a sample and a file name (``sample/file-stem``) cannot be stored, or None.

    Examples
    --------
    >>> automatic_dataset_name_problem("cell-3", "run-1.csv") is None
    True
    >>> automatic_dataset_name_problem("s" * 150, "r" * 60 + ".csv")
    'the dataset name made from the sample and the file name would be 211 characters long; at most 200 are stored'
    """
    from pathlib import PurePath

    stem = PurePath(file_name).stem or "import"
    length = len(f"{sample + '/' if sample else ''}{stem}")
    limit = COLUMNS["datasets"]["name"].length or 0
    if length + NAME_SUFFIX_ROOM > limit:
        return (f"the dataset name made from the sample and the file name would be {length} characters long; "
                f"at most {limit} are stored")
    return None
