"""Validation of level rows (from files, web forms and API bodies) into records.

Every field is checked on its own and against the others (term against J,
parity against term and configuration, g against J, electrons against the
species); each problem names source, line and field. A whole file is checked
before anything is handed on, so an import is all-or-nothing.
"""

from __future__ import annotations

import math
import os
import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass

from levels.errors import InputFileError, NotationError, Problem
from levels.io import limits
from levels.io.limits import FLOAT_LIMIT, INT_MAX, MAX_ENERGY_CM1, control_character
from levels.io.tables import MAX_PROBLEMS, read_delimited
from levels.notation import (
    JKTerm,
    Spectrum,
    Term,
    canonical_configuration,
    format_configuration,
    format_term,
    jk_term_problem,
    level_label,
    parse_configuration,
    parse_j,
    parse_level_term,
    parse_spectrum,
)

#: level columns of the design contract, in order
LEVEL_COLUMNS = (
    "spectrum", "label", "configuration", "term", "j", "parity", "energy_cm1", "unc_cm1",
    "g", "n", "l", "lifetime_s", "lande_g", "dataset",
)
LEVEL_REQUIRED = ("spectrum", "configuration", "term", "j", "energy_cm1")
#: a number as a file may write it: ASCII digits, one decimal point, an optional exponent
_ASCII_NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)
_ASCII_INTEGER = re.compile(r"[+-]?[0-9]+", re.ASCII)
#: fields of free text (tabs allowed); every other text field is one line of printable characters
_MULTILINE_FIELDS = ("note",)


@dataclass(frozen=True)
class LevelRecord:
    """A validated level, ready for the store."""

    spectrum: Spectrum
    label: str
    configuration: str
    term: str
    two_j: int
    parity: int
    energy_cm1: float
    unc_cm1: float | None = None
    multiplicity: int | None = None
    big_l: int | None = None
    n: int | None = None
    l: int | None = None
    lifetime_s: float | None = None
    lande_g: float | None = None
    dataset: str | None = None
    line: int | None = None
    #: the canonical configuration (:func:`levels.notation.canonical_configuration`): the same text
    #: whether the closed core is written out, bracketed or left out; ``configuration`` keeps the form given
    state_configuration: str | None = None

    @property
    def state_key(self) -> tuple:
        """Identity of the state within a species: (canonical configuration, term, two_j)."""
        return (self.state_configuration or self.configuration, self.term, self.two_j)


class _Row:
    """Collects the problems of one row."""

    def __init__(self, source: str, line: int | None, fields: Mapping[str, object]):
        self.source, self.line, self.fields = source, line, fields
        self.problems: list[Problem] = []

    def text(self, name: str) -> str:
        value = self.fields.get(name)
        if value is None:
            return ""
        return value.strip() if isinstance(value, str) else str(value)

    def fail(self, field: str | None, message: str) -> None:
        self.problems.append(Problem(self.source, self.line, field, message))

    def refuse_controls(self) -> bool:
        """Record every text field holding a terminal control character; True when there was one."""
        before = len(self.problems)
        for name, value in self.fields.items():
            if isinstance(value, str):
                bad = control_character(value, multiline=name in _MULTILINE_FIELDS)
                if bad:
                    self.fail(name, f"holds the control character {bad}; terminal control characters are refused")
        return len(self.problems) > before

    def number(self, name: str, *, required: bool = False, minimum: float | None = None,
               strictly_positive: bool = False, maximum: float | None = None) -> float | None:
        raw = self.fields.get(name)
        if isinstance(raw, (int, float)) and not isinstance(raw, bool):
            shown = repr(raw) if len(repr(raw)) <= 40 else f"{repr(raw)[:20]}..."
            try:
                value = float(raw)
            except OverflowError:
                self.fail(name, f"{shown} is too large to store (the store holds numbers below {FLOAT_LIMIT:g})")
                return None
        else:
            text = self.text(name)
            if not text:
                if required:
                    self.fail(name, "a value is required")
                return None
            shown = repr(text)
            if text.lower().lstrip("+-") in ("nan", "inf", "infinity"):
                self.fail(name, f"{shown} is not a finite number")
                return None
            try:
                value = float(text)
            except ValueError:
                self.fail(name, f"{shown} is not a number")
                return None
            if not _ASCII_NUMBER.fullmatch(text):
                self.fail(name, f"{shown} is not a number; write it with the digits 0-9, a '.' and an optional "
                                "exponent (no '_', no other digits)")
                return None
        if not math.isfinite(value):
            self.fail(name, f"{shown} is not a finite number")
            return None
        if strictly_positive and value <= 0:
            self.fail(name, f"{shown} must be greater than zero")
            return None
        if minimum is not None and value < minimum:
            self.fail(name, f"{shown} must not be negative" if minimum == 0
                      else f"{shown} is below the smallest accepted value {minimum:g}")
            return None
        if maximum is not None and value > maximum:
            self.fail(name, f"{shown} is above the largest accepted value {maximum:g}")
            return None
        if abs(value) >= FLOAT_LIMIT:
            self.fail(name, f"{shown} is too large to store (the store holds numbers below {FLOAT_LIMIT:g})")
            return None
        return value

    def parsed(self, name: str, parser, *, required: bool = False):
        """``parser(text)`` of a field, recording its NotationError; None when blank or bad."""
        text = self.text(name)
        if not text:
            if required:
                self.fail(name, "a value is required")
            return None
        try:
            return parser(text)
        except NotationError as exc:
            self.fail(name, str(exc))
            return None

    def integer(self, name: str, minimum: int) -> int | None:
        raw = self.fields.get(name)
        if isinstance(raw, int) and not isinstance(raw, bool):
            value = raw
        else:
            text = self.text(name)
            if not text:
                return None
            if not _ASCII_INTEGER.fullmatch(text):
                self.fail(name, f"{text!r} is not a whole number" + (
                    "; write it with the digits 0-9 only" if _is_int(text) else ""))
                return None
            value = int(text)
        if value < minimum:
            self.fail(name, f"{value} is below {minimum}")
            return None
        if value > INT_MAX:
            self.fail(name, f"{value} is above the largest storable whole number {INT_MAX}")
            return None
        return value


def _is_int(text: str) -> bool:
    try:
        int(text)
    except ValueError:
        return False
    return True


def parse_parity(text: str) -> int:
    """Parity from ``+1``/``1``/``even``/``e`` or ``-1``/``odd``/``o``/``°``."""
    key = text.strip().lower()
    if key in ("1", "+1", "+", "even", "e"):
        return 1
    if key in ("-1", "-", "odd", "o", "°"):
        return -1
    raise NotationError(f"{text!r} is not a parity (write +1 or -1, even or odd)")


def validate_level(fields: Mapping[str, object], *, source: str, line: int | None = None,
                   default_dataset: str | None = None) -> tuple[LevelRecord | None, list[Problem]]:
    """Validate one level given as a mapping of field name to text (or number).

    Returns
    -------
    (LevelRecord or None, list of Problem)
        The record when there is no problem.
    """
    row = _Row(source, line, fields)
    if row.refuse_controls():
        return None, row.problems
    spectrum = row.parsed("spectrum", parse_spectrum, required=True)
    config_text = row.text("configuration")
    configuration = row.parsed("configuration", parse_configuration, required=True)
    term = row.parsed("term", parse_level_term)
    j_text = row.text("j")
    two_j = row.parsed("j", parse_j, required=True)
    energy = row.number("energy_cm1", required=True, minimum=0.0, maximum=MAX_ENERGY_CM1)
    unc = row.number("unc_cm1", minimum=0.0, maximum=MAX_ENERGY_CM1)
    lifetime = row.number("lifetime_s", strictly_positive=True)
    lande = row.number("lande_g", minimum=-1e3, maximum=1e3)
    n = row.integer("n", 1)
    l_value = row.integer("l", 0)
    g = row.integer("g", 1)

    parity = None
    if row.text("parity"):
        try:
            parity = parse_parity(row.text("parity"))
        except NotationError as exc:
            row.fail("parity", str(exc))
    if configuration is not None:
        if spectrum is not None and configuration.electrons > spectrum.electrons:
            row.fail("configuration", f"{config_text!r} holds {configuration.electrons} electrons, "
                                      f"but {spectrum.name} has {spectrum.electrons}")
        if term is not None and term.parity != configuration.parity:
            row.fail("term", f"term {row.text('term')!r} has {_parity_word(term.parity)} parity, "
                             f"configuration {config_text!r} has {_parity_word(configuration.parity)}")
        if parity is not None and parity != configuration.parity:
            row.fail("parity", f"parity {row.text('parity')!r} contradicts configuration {config_text!r} "
                               f"({_parity_word(configuration.parity)})")
        if isinstance(term, JKTerm) and jk_term_problem(configuration, term):
            row.fail("term", f"jK term {row.text('term')!r}: {jk_term_problem(configuration, term)}")
        parity = configuration.parity
        outer_n, outer_l, _ = configuration.outer
        if n is not None and n != outer_n:
            row.fail("n", f"n = {n} contradicts the outer subshell of {config_text!r} (n = {outer_n})")
        if l_value is not None and l_value != outer_l:
            row.fail("l", f"l = {l_value} contradicts the outer subshell of {config_text!r} (l = {outer_l})")
        n, l_value = outer_n, outer_l
    if term is not None and two_j is not None and not term.allows_two_j(two_j):
        row.fail("j", f"J = {j_text} is impossible for the term {format_term(term)}")
    if g is not None and two_j is not None and g != two_j + 1:
        row.fail("g", f"g = {g} contradicts J = {j_text} (g = 2J + 1 = {two_j + 1})")

    dataset = row.text("dataset") or default_dataset
    if row.problems:
        return None, row.problems
    config_canonical = format_configuration(configuration)
    state_config = canonical_configuration(configuration, spectrum.electrons)
    term_canonical = format_term(term)
    if two_j + 1 > INT_MAX:
        row.fail("j", f"J = {field_text(row, 'j')} is too large to store (2J + 1 must not exceed {INT_MAX})")
    for field, value in (("configuration", n), ("term", term.multiplicity if term else None)):
        if value is not None and value > INT_MAX:
            what = "the principal quantum number" if field == "configuration" else "the multiplicity"
            row.fail(field, f"{field_text(row, field)!r}: {what} {value} is too large to store (at most {INT_MAX})")
    for field, value in (("configuration", config_canonical), ("configuration", state_config),
                         ("term", term_canonical), ("dataset", dataset)):
        column = "name" if field == "dataset" else field
        length = limits.COLUMNS["datasets" if field == "dataset" else "levels"][column].length
        if value is None:
            continue
        problem = limits.text_problem(value, length)
        if problem:
            shown = (field_text(row, field) if field != "dataset"
                     else (value if len(value) <= 40 else value[:37] + "..."))
            row.fail(field, f"{'dataset name ' if field == 'dataset' else ''}{shown!r} {problem}")
    if row.problems:
        return None, row.problems[:1]
    # a missing required number or parity recorded a problem above
    assert parity is not None and energy is not None
    label = row.text("label") or level_label(config_canonical, term_canonical, two_j)
    if len(label) > 200:
        return None, [Problem(source, line, "label", "label is longer than 200 characters")]
    record = LevelRecord(
        spectrum=spectrum, label=label, configuration=config_canonical, term=term_canonical,
        two_j=two_j, parity=parity, energy_cm1=energy, unc_cm1=unc,
        multiplicity=term.multiplicity if isinstance(term, Term) else None,
        big_l=term.L if isinstance(term, Term) else None,
        n=n, l=l_value, lifetime_s=lifetime, lande_g=lande, dataset=dataset, line=line,
        state_configuration=state_config,
    )
    return record, []


def field_text(row: _Row, name: str) -> str:
    """The text of a field as given, shortened for a message."""
    text = row.text(name)
    return text if len(text) <= 40 else text[:37] + "..."


def _parity_word(parity: int) -> str:
    return "even" if parity == 1 else "odd"


def validate_levels(items: Iterable[tuple[int | None, Mapping[str, object]]], *, source: str,
                    default_dataset: str | None = None) -> list[LevelRecord]:
    """Validate many level rows; raise :class:`InputFileError` listing every problem.

    Also refuses two rows for the same state or the same label of one species,
    and a file whose rows name different datasets.
    """
    records: list[LevelRecord] = []
    problems: list[Problem] = []
    seen_state: dict[tuple, tuple[int | None, str]] = {}
    seen_label: dict[tuple, int | None] = {}
    for line, fields in items:
        record, row_problems = validate_level(fields, source=source, line=line, default_dataset=default_dataset)
        problems.extend(row_problems)
        if record is not None:
            key = (record.spectrum, record.state_key)
            if key in seen_state:
                first_line, first_label = seen_state[key]
                same = "" if first_label == record.label else (
                    f" as {first_label!r} (the same state: {record.state_key[0]} {record.term}, the closed core "
                    "written out, bracketed or left out)")
                problems.append(Problem(source, line, "j", f"duplicate state {record.label!r} of "
                                                          f"{record.spectrum.name}, first given on line "
                                                          f"{first_line}{same}"))
            elif (record.spectrum, record.label) in seen_label:
                problems.append(Problem(source, line, "label", f"duplicate label {record.label!r}, first given on line "
                                                               f"{seen_label[(record.spectrum, record.label)]}"))
            else:
                seen_state[key] = (line, record.label)
                seen_label[(record.spectrum, record.label)] = line
                records.append(record)
        if len(problems) >= MAX_PROBLEMS:
            break
    names = {r.dataset for r in records}
    if len(names) > 1:
        listed = ", ".join(sorted(map(str, names)))
        problems.append(Problem(source, None, "dataset", f"rows name several datasets ({listed}); "
                                                        "one file makes one dataset"))
    if problems:
        raise InputFileError(problems)
    return records


def read_levels_file(path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None,
                     default_dataset: str | None = None) -> list[LevelRecord]:
    """Read and validate a levels CSV (columns of :data:`LEVEL_COLUMNS`; see README)."""
    table = read_delimited(path_or_bytes, source=source, known_columns=LEVEL_COLUMNS,
                           required_columns=LEVEL_REQUIRED)
    return validate_levels(table.rows, source=table.source, default_dataset=default_dataset)


# ----------------------------------------------------------------- measured lines

LINE_FILE_COLUMNS = ("spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm", "intensity", "a_per_s",
                     "f_abs", "multipole", "note")
LINE_FILE_REQUIRED = ("spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm")
#: wavelengths accepted, nm (1 pm to 1 m)
WAVELENGTH_RANGE_NM = (1e-3, 1e9)


@dataclass(frozen=True)
class LineRecord:
    """A validated measured line; ``lower``/``upper`` are level labels still to be resolved."""

    spectrum: Spectrum
    lower: str
    upper: str
    wavelength_nm: float
    medium: str
    unc_nm: float
    intensity: float | None = None
    a_per_s: float | None = None
    f_abs: float | None = None
    multipole: str = "E1"
    note: str = ""
    line: int | None = None


def validate_line(fields: Mapping[str, object], *, source: str,
                  line: int | None = None) -> tuple[LineRecord | None, list[Problem]]:
    """Validate one measured line row (labels are checked against levels later)."""
    row = _Row(source, line, fields)
    if row.refuse_controls():
        return None, row.problems
    spectrum = row.parsed("spectrum", parse_spectrum, required=True)
    lower, upper = row.text("lower"), row.text("upper")
    for name, value in (("lower", lower), ("upper", upper)):
        problem = limits.value_problem("levels", "label", value)
        if problem:
            row.fail(name, f"label {problem}")
    if not lower:
        row.fail("lower", "a level label is required")
    if not upper:
        row.fail("upper", "a level label is required")
    if lower and upper and lower == upper:
        row.fail("upper", "a line needs two different levels")
    wavelength = row.number("wavelength_nm", required=True, strictly_positive=True, maximum=WAVELENGTH_RANGE_NM[1])
    if wavelength is not None and wavelength < WAVELENGTH_RANGE_NM[0]:
        row.fail("wavelength_nm", f"{wavelength!r} nm is below the accepted {WAVELENGTH_RANGE_NM[0]} nm")
        wavelength = None
    medium = row.text("medium").lower()
    if medium not in ("air", "vacuum"):
        row.fail("medium", f"{row.text('medium')!r} is not a medium; write air or vacuum")
    elif medium == "air" and wavelength is not None and wavelength < 200.0:
        row.fail("medium", f"air wavelengths are defined above 200 nm; {wavelength:g} nm must be given in vacuum")
    unc = row.number("unc_nm", required=True, strictly_positive=True)
    intensity = row.number("intensity", minimum=0.0)
    a_value = row.number("a_per_s", minimum=0.0)
    f_value = row.number("f_abs", minimum=0.0)
    multipole = (row.text("multipole") or "E1").upper()
    if multipole not in ("E1", "M1", "E2"):
        row.fail("multipole", f"{row.text('multipole')!r} is not one of E1, M1, E2")
    note = row.text("note")
    if row.problems:
        return None, row.problems
    assert wavelength is not None and unc is not None  # required numbers: a problem was recorded otherwise
    return LineRecord(spectrum, lower, upper, wavelength, medium, unc, intensity, a_value, f_value, multipole,
                      note, line), []


def validate_lines(items: Iterable[tuple[int | None, Mapping[str, object]]], *, source: str) -> list[LineRecord]:
    """Validate many measured lines; refuse duplicates; raise InputFileError listing every problem."""
    records, problems = [], []
    seen: dict[tuple, int | None] = {}
    for line, fields in items:
        record, row_problems = validate_line(fields, source=source, line=line)
        problems.extend(row_problems)
        if record is not None:
            key = (record.spectrum, record.lower, record.upper, record.multipole)
            if key in seen:
                problems.append(Problem(source, line, "upper", f"duplicate line {record.lower} - {record.upper}, "
                                                               f"first given on line {seen[key]}"))
            else:
                seen[key] = line
                records.append(record)
        if len(problems) >= MAX_PROBLEMS:
            break
    if problems:
        raise InputFileError(problems)
    return records


# ----------------------------------------------------------------- peaks

PEAK_COLUMNS = ("peak_nm", "medium", "unc_nm", "intensity", "note",
                # what ``levels peaks`` writes: peak_unc_nm stands for unc_nm, area for intensity
                "peak_unc_nm", "fwhm_nm", "area", "area_unc", "snr", "fwhm_unc_nm")


@dataclass(frozen=True)
class PeakRecord:
    """A measured peak to identify."""

    peak_nm: float
    medium: str
    unc_nm: float | None
    intensity: float | None
    note: str
    line: int | None


def read_peaks_file(path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None,
                    default_medium: str = "air") -> list[PeakRecord]:
    """Read a peaks CSV (``peak_nm`` required; ``medium, unc_nm, intensity, note`` optional)."""
    table = read_delimited(path_or_bytes, source=source, known_columns=PEAK_COLUMNS, required_columns=("peak_nm",))
    peaks, problems = [], []
    for line, fields in table.rows:
        row = _Row(table.source, line, fields)
        if row.refuse_controls():
            problems.extend(row.problems)
            continue
        value = row.number("peak_nm", required=True, strictly_positive=True, maximum=WAVELENGTH_RANGE_NM[1])
        medium = (row.text("medium") or default_medium).lower()
        if medium not in ("air", "vacuum"):
            row.fail("medium", f"{row.text('medium')!r} is not a medium; write air or vacuum")
        unc = row.number("unc_nm", strictly_positive=True)
        if unc is None:
            unc = row.number("peak_unc_nm", strictly_positive=True)
        intensity = row.number("intensity", minimum=0.0)
        if intensity is None:
            intensity = row.number("area", minimum=0.0)
        problems.extend(row.problems)
        if not row.problems and value is not None:  # a missing peak_nm recorded a problem
            peaks.append(PeakRecord(value, medium, unc, intensity, row.text("note"), line))
    if problems:
        raise InputFileError(problems)
    return peaks
