"""Reading delimited text safely, and writing tables with a provenance header.

Reading: :func:`read_delimited` takes bytes or a path and returns the header and
the data rows with their physical line numbers, or raises
:class:`~levels.errors.InputFileError` naming file, line and field. It refuses
binary data, text that is not UTF-8, over-long lines and ragged rows.
``#`` lines before the header and blank lines are skipped (but counted).

Writing: :func:`format_table` renders rows as CSV (``#`` provenance lines, then a
header), JSON (``{"provenance": {...}, "rows": [...]}``) or ECSV 1.0 (the
Enhanced Character Separated Values format of the astropy project, an open
specification: a YAML header in ``#`` lines). :func:`write_atomic` writes a file
through a temporary file and a rename, so a reader never sees half a file.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import math
import os
import re
import stat
import tempfile
import threading
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import scipy.constants as _sc

from levels.errors import InputFileError, LevelsError, Problem

MAX_LINE_BYTES = 1 << 20
MAX_FILE_BYTES = 512 << 20
MAX_PROBLEMS = 100
FORMATS = ("csv", "json", "ecsv")


@dataclass(frozen=True)
class DelimitedTable:
    """A parsed table: source name, header line number, columns and rows with line numbers."""

    source: str
    header_line: int
    columns: tuple[str, ...]
    rows: tuple[tuple[int, dict[str, str]], ...]


def read_source(path_or_bytes: str | os.PathLike | bytes, source: str | None = None,
                max_bytes: int = MAX_FILE_BYTES) -> tuple[str, bytes]:
    """Load the raw bytes of a file (or take given bytes) with the name used in messages.

    Only regular files are read: a directory, a device (``/dev/zero``), a FIFO or
    a socket is refused from :func:`os.stat` before anything is opened, so
    nothing blocks and nothing reads without end. At most ``max_bytes`` are
    read; a file that is (or grows) larger is refused, counting the bytes
    actually read, not the size the file system reports.
    """
    if isinstance(path_or_bytes, (bytes, bytearray)):
        data = bytes(path_or_bytes)
        name = source or "<upload>"
        if len(data) > max_bytes:
            raise InputFileError([Problem(name, None, None, f"file is {len(data)} bytes, more than the {max_bytes} "
                                                            "bytes accepted")])
        return name, data
    path = Path(path_or_bytes)
    name = source or path.name
    handle = open_regular_file(path, name)
    with handle:
        data = handle.read(max_bytes + 1)
    if len(data) > max_bytes:
        raise InputFileError([Problem(name, None, None, f"file is more than the {max_bytes} bytes accepted")])
    return name, data


def regular_file_problem(path: str | os.PathLike) -> str | None:
    """Why ``path`` cannot be read as an input file (missing, a directory, a device, a FIFO ...), or None.

    Uses :func:`os.stat` (which follows symbolic links) and never opens the file.
    """
    try:
        info = os.stat(path)
    except OSError as exc:
        return f"cannot read the file: {exc.strerror or exc}"
    if stat.S_ISDIR(info.st_mode):
        return "is a directory, not a file"
    if stat.S_ISFIFO(info.st_mode):
        return "is a named pipe (FIFO), not a regular file; save the data to a file first"
    if stat.S_ISCHR(info.st_mode) or stat.S_ISBLK(info.st_mode):
        return "is a device, not a regular file"
    if not stat.S_ISREG(info.st_mode):
        return "is not a regular file"
    return None


def open_regular_file(path: str | os.PathLike, name: str | None = None):
    """Open a regular file for reading in binary mode, or raise InputFileError naming it.

    Checked with :func:`os.stat` first, opened without blocking and checked again
    on the open descriptor, so a file swapped for a FIFO in between is refused too.
    """
    name = name or Path(path).name
    problem = regular_file_problem(path)
    if problem:
        raise InputFileError([Problem(name, None, None, problem)])
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except OSError as exc:
        raise InputFileError([Problem(name, None, None, f"cannot read the file: {exc.strerror or exc}")]) from None
    if not stat.S_ISREG(os.fstat(fd).st_mode):
        os.close(fd)
        raise InputFileError([Problem(name, None, None, "is not a regular file")])
    if hasattr(os, "set_blocking"):
        os.set_blocking(fd, True)
    return os.fdopen(fd, "rb")


def decode_lines(source: str, data: bytes) -> list[str]:
    """Split bytes into text lines, refusing binary data, non-UTF-8 text and over-long lines."""
    if not data.strip():
        raise InputFileError([Problem(source, None, None, "the file is empty; expected a header line")])
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    if data.startswith((b"\xff\xfe\x00\x00", b"\x00\x00\xfe\xff")):
        raise InputFileError([Problem(source, 1, None, "the file is UTF-32 text; save it as UTF-8")])
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise InputFileError([Problem(source, 1, None, "the file is UTF-16 text; save it as UTF-8")])
    raw_lines = data.split(b"\n")
    problems = []
    lines = []
    for number, raw in enumerate(raw_lines, start=1):
        if len(raw) > MAX_LINE_BYTES:
            problems.append(Problem(source, number, None, f"line is {len(raw)} bytes long, more than {MAX_LINE_BYTES}"))
            break
        if b"\x00" in raw:
            problems.append(Problem(source, number, None, "binary data (NUL byte); expected UTF-8 text"))
            break
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            problems.append(Problem(
                source, number, None,
                f"not UTF-8 text (byte 0x{raw[exc.start]:02x} at column {exc.start + 1}); save the file as UTF-8",
            ))
            break
        lines.append(text.rstrip("\r"))
    if problems:
        raise InputFileError(problems)
    return lines


def read_delimited(path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None,
                   known_columns: Sequence[str] | None = None,
                   required_columns: Sequence[str] = ()) -> DelimitedTable:
    """Read a comma-separated file with a header line.

    Parameters
    ----------
    path_or_bytes : path or bytes
        The file, or its content.
    source : str, optional
        Name used in messages (default: the file name).
    known_columns : sequence of str, optional
        If given, any other column is an error.
    required_columns : sequence of str
        Columns that must be present.

    Raises
    ------
    InputFileError
        With every problem found (up to a limit), each naming file, line and field.
    """
    name, data = read_source(path_or_bytes, source)
    lines = decode_lines(name, data)
    index = 0
    while index < len(lines) and (not lines[index].strip() or lines[index].lstrip().startswith("#")):
        index += 1
    if index == len(lines):
        raise InputFileError([Problem(name, None, None, "no header line; the file holds only comments or blank lines")])
    header_line = index + 1
    try:
        header = [cell.strip() for cell in split_csv_line(lines[index])]
    except csv.Error as exc:
        raise InputFileError([Problem(name, header_line, None, f"malformed CSV header: {exc}")]) from None
    problems = _check_header(name, header_line, header, known_columns, required_columns)
    if problems:
        raise InputFileError(problems)
    rows = []
    for offset, text in enumerate(lines[index + 1:], start=index + 2):
        if not text.strip() or text.lstrip().startswith("#"):
            continue
        try:
            cells = split_csv_line(text)
        except csv.Error as exc:
            problems.append(Problem(name, offset, None, f"malformed CSV: {exc}"))
            continue
        if len(cells) != len(header):
            problems.append(Problem(name, offset, None,
                                    f"expected {len(header)} fields as in the header, found {len(cells)}"))
            if len(problems) >= MAX_PROBLEMS:
                break
            continue
        rows.append((offset, {col: cell.strip() for col, cell in zip(header, cells)}))
    if problems:
        raise InputFileError(problems)
    if not rows:
        raise InputFileError([Problem(name, header_line, None, "the header is not followed by any data row")])
    return DelimitedTable(name, header_line, tuple(header), tuple(rows))


def split_csv_line(text: str) -> list[str]:
    """The fields of one CSV line (strict quoting); raise csv.Error with a message a user can act on.

    A quoted field that is not closed on its line is reported as such: fields
    may not hold line breaks (one row, one line, so every message names the
    right line).

    Examples
    --------
    >>> split_csv_line('Na I,"3s",2S')
    ['Na I', '3s', '2S']
    """
    try:
        return next(csv.reader([text], strict=True))
    except csv.Error as exc:
        if text.count('"') % 2:
            raise csv.Error("a quoted field is not closed on this line (a field may not hold a line break; "
                            "keep each row on one line)") from None
        raise csv.Error(str(exc)) from None


def _check_header(name: str, line: int, header: list[str], known: Sequence[str] | None,
                  required: Sequence[str]) -> list[Problem]:
    problems = []
    seen = set()
    for col in header:
        if not col:
            problems.append(Problem(name, line, None, "the header has an empty column name"))
        elif col in seen:
            problems.append(Problem(name, line, col, "column appears twice in the header"))
        seen.add(col)
    if known is not None:
        for col in header:
            if col and col not in known:
                problems.append(Problem(name, line, col, f"unknown column; known columns are {', '.join(known)}"))
    for col in required:
        if col not in seen:
            problems.append(Problem(name, line, col, "required column is missing from the header"))
    return problems


# ----------------------------------------------------------------- writing

#: the atomic unit of line strength, (e a0)^2, in C2 m2 (CODATA via scipy.constants): an ECSV unit
#: string astropy parses (a scaled unit), where a spelling like "e2 a0^2" is not a unit it knows
LINE_STRENGTH_UNIT = f"{(_sc.e * _sc.physical_constants['Bohr radius'][0]) ** 2!r} C2 m2"

_CM1, _NM = "cm-1", "nm"

#: the column contract (design section 3): every column of every export, its type and its unit,
#: fixed whatever the rows hold, so that an export whose rows happen to leave a column empty has
#: the same types as any other (CSV cells, JSON values, ECSV ``datatype``/``unit``).
#: Types: ``string``, ``int64`` (a count or a quantum number; empty when unknown), ``float64``.
COLUMN_CONTRACT: dict[str, tuple[str, str | None]] = {
    # texts
    **{name: ("string", None) for name in (
        "spectrum", "lower", "upper", "multipole", "dataset", "datasets", "label", "configuration", "term", "j",
        "medium", "note", "flag", "pattern", "name", "created_at", "method", "kind", "description", "gas_fill",
        "instrument", "sample", "citation", "line_name", "weighting")},
    # integers
    **{name: ("int64", None) for name in (
        "z", "charge", "mass_number", "levels", "lines", "g", "n", "l", "parity", "g_lower", "g_upper", "rank",
        "n_lines", "n_used", "id", "members")},
    # wavenumbers and energies
    **{name: ("float64", _CM1) for name in (
        "lower_cm1", "upper_cm1", "wavenumber_cm1", "energy_cm1", "unc_cm1", "ionization_cm1",
        "ionization_unc_cm1", "residual_cm1", "stored_cm1", "limit_cm1", "limit_unc_cm1")},
    # wavelengths
    **{name: ("float64", _NM) for name in (
        "vacuum_nm", "air_nm", "unc_nm", "obs_nm", "ritz_nm", "obs_minus_ritz_nm", "peak_nm", "peak_unc_nm",
        "fwhm_nm", "fwhm_unc_nm", "line_nm", "delta_nm", "wavelength_nm", "observed_nm")},
    # rates and the rest
    "a_per_s": ("float64", "s-1"), "lifetime_s": ("float64", "s"), "line_strength_au": ("float64", LINE_STRENGTH_UNIT),
    **{name: ("float64", None) for name in (
        "f_abs", "gf", "lande_g", "rel_intensity", "photon_share", "a_rel_unc", "lifetime_rel_unc", "area", "area_unc",
        "snr", "intensity", "intensity_unc")},
    # a line list's position column in the unit asked (levels lines --unit)
    "wavelength_angstrom": ("float64", "Angstrom"), "wavelength_um": ("float64", "um"),
    "photon_energy_ev": ("float64", "eV"), "photon_energy_kev": ("float64", "keV"), "frequency_hz": ("float64", "Hz"),
    "pressure_pa": ("float64", "Pa"), "current_a": ("float64", "A"), "te_k": ("float64", "K"),
    "tgas_k": ("float64", "K"), "ne_m3": ("float64", "m-3"), "path_length_m": ("float64", "m"),
}


def column_type(column: str) -> str | None:
    """The contract type of an export column (``string``, ``int64``, ``float64``), or None if not in it.

    Examples
    --------
    >>> column_type("unc_nm"), column_type("g_upper"), column_type("dataset"), column_type("nonsense")
    ('float64', 'int64', 'string', None)
    """
    entry = COLUMN_CONTRACT.get(column)
    return entry[0] if entry else None


def column_unit(column: str, given: Mapping[str, str] | None = None) -> str | None:
    """The unit of an export column: the contract's, else the caller's (``given``)."""
    if column in COLUMN_CONTRACT:
        return COLUMN_CONTRACT[column][1]
    return (given or {}).get(column) or None


def contract_value(value, dtype: str | None):
    """A cell value as its contract type: None for missing/NaN, int for ``int64``, float for ``float64``.

    A value that does not convert is returned as it is (the writer never hides data).

    Examples
    --------
    >>> contract_value(13000, "float64"), contract_value(2.0, "int64"), contract_value(float("nan"), "float64")
    (13000.0, 2, None)
    """
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):
        value = value.item()
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return None
    if dtype == "float64" and isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    if (dtype == "int64" and isinstance(value, (int, float)) and not isinstance(value, bool)
            and float(value).is_integer()):
        return int(value)
    if dtype == "string" and not isinstance(value, str):
        return str(value)
    return value


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        return repr(value)
    return str(value)


def _json_value(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "item"):
        return _json_value(value.item())
    return value


def provenance_lines(provenance: Mapping[str, object]) -> list[str]:
    """``key: value`` lines of a provenance mapping, in order."""
    return [f"{key}: {value}" for key, value in provenance.items()]


def format_table(rows: Iterable[Mapping[str, object]], columns: Sequence[str], fmt: str,
                 provenance: Mapping[str, object], units: Mapping[str, str] | None = None,
                 rows_key: str | Sequence[str] = "rows") -> str:
    """Render rows in CSV, JSON or ECSV with the provenance header.

    Every column of the contract (:data:`COLUMN_CONTRACT`) is written with its
    contract type and unit whatever the rows hold (integers as integers, floats
    as floats, a column empty in every row keeps its numeric type in ECSV).

    Parameters
    ----------
    rows : iterable of mappings
        Each row maps column name to value (missing or None = empty).
    columns : sequence of str
        Column order (the contract).
    fmt : {"csv", "json", "ecsv"}
    provenance : mapping
        Tool version, store, datasets, query, air formula ...: written as ``#``
        lines (CSV), a ``provenance`` object (JSON) or ECSV ``meta``.
    units : mapping, optional
        Unit per column not in the contract, written into the ECSV header.
    rows_key : str or sequence of str
        Key of the rows in JSON (``"lines"`` for line lists, as in the emission report); with
        several keys the same rows appear under each (an old key kept as an alias).
    """
    rows = list(rows)
    types = [column_type(c) for c in columns]
    if fmt == "csv":
        out = io.StringIO()
        for line in provenance_lines(provenance):
            out.write(f"# {line}\n")
        writer = csv.writer(out, lineterminator="\n")
        writer.writerow(columns)
        for row in rows:
            writer.writerow([_cell(contract_value(row.get(c), t)) for c, t in zip(columns, types)])
        return out.getvalue()
    if fmt == "json":
        listed = [{c: _json_value(contract_value(row.get(c), t)) for c, t in zip(columns, types)} for row in rows]
        keys = (rows_key,) if isinstance(rows_key, str) else tuple(rows_key)
        payload = {"provenance": {k: _json_value(v) for k, v in provenance.items()}, "columns": list(columns),
                   **{key: listed for key in keys}}
        return json.dumps(payload, ensure_ascii=False, indent=1) + "\n"
    if fmt == "ecsv":
        return _format_ecsv(rows, columns, provenance, units or {})
    raise ValueError(f"unknown format {fmt!r}; choose one of {', '.join(FORMATS)}")


def _ecsv_type(values: list) -> str:
    present = [v for v in values if v is not None and not (isinstance(v, float) and math.isnan(v))]
    if present and all(isinstance(v, bool) for v in present):
        return "bool"
    if present and all(isinstance(v, int) and not isinstance(v, bool) for v in present):
        return "int64"
    if present and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in present):
        return "float64"
    return "string"


def _yaml_scalar(value) -> str:
    return json.dumps(_json_value(value), ensure_ascii=False)


def _format_ecsv(rows: list, columns: Sequence[str], provenance: Mapping[str, object],
                 units: Mapping[str, str]) -> str:
    out = io.StringIO()
    out.write("# %ECSV 1.0\n# ---\n# delimiter: ','\n# datatype:\n")
    types = [column_type(c) for c in columns]
    for col, contract in zip(columns, types):
        dtype = contract or _ecsv_type([row.get(col) for row in rows])
        unit = column_unit(col, units)
        entry = f"# - {{name: {col}, datatype: {dtype}"
        if unit:
            entry += f", unit: {_yaml_scalar(unit)}"
        out.write(entry + "}\n")
    out.write("# meta:\n")
    for key, value in provenance.items():
        out.write(f"#   {key}: {_yaml_scalar(value)}\n")
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(columns)
    for row in rows:
        writer.writerow([_cell(contract_value(row.get(c), t)) for c, t in zip(columns, types)])
    return out.getvalue()


class OutputError(LevelsError, OSError):
    """An output file could not be written (disk full, no permission, a refused path); nothing was replaced."""


_UMASK_LOCK = threading.Lock()


def current_umask() -> int:
    """The process's file-creation mask (read without changing it for good)."""
    with _UMASK_LOCK:
        mask = os.umask(0o022)
        os.umask(mask)
    return mask


def write_atomic(path: str | os.PathLike, content: str | bytes) -> None:
    """Write text (or bytes) to ``path`` through a temporary file in the same folder and a rename.

    The file gets the mode a new file gets from the umask (``0o666 & ~umask``),
    or keeps the mode of the file it replaces. A symbolic link is followed: its
    target is replaced and the link stays. Failures (disk full, no permission)
    raise :class:`OutputError` with one line naming the file; the old file, if
    any, is left as it was.
    """
    target = Path(os.path.realpath(path))
    data = content.encode("utf-8") if isinstance(content, str) else bytes(content)
    tmp = None
    try:
        try:
            mode = stat.S_IMODE(os.stat(target).st_mode)
        except FileNotFoundError:
            mode = 0o666 & ~current_umask()
        target.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, target)
        tmp = None
    except OSError as exc:
        raise OutputError(f"cannot write {os.fspath(path)}: {exc.strerror or exc}; nothing was written") from None
    finally:
        if tmp is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp)


def format_text_table(rows: Sequence[Mapping[str, object]], columns: Sequence[str],
                      headings: Mapping[str, str] | None = None, max_rows: int | None = None) -> str:
    """An aligned plain-text table for people (numbers right-aligned, shown as :mod:`levels.io.display` says)."""
    headings = headings or {}
    from levels.io.display import format_rows

    shown = list(rows if max_rows is None else rows[:max_rows])
    # one display policy for numbers (levels.io.display): rounded to their uncertainty, fixed or scientific per column
    cells = [[printable(cell) for cell in row] for row in format_rows(shown, columns)]
    titles = [headings.get(c, c) for c in columns]
    widths = [max([len(t)] + [len(r[i]) for r in cells]) for i, t in enumerate(titles)]
    numeric = [all(_is_number(row.get(c)) for row in shown if row.get(c) is not None) for c in columns]
    def fmt(values):
        return "  ".join(v.rjust(w) if num else v.ljust(w) for v, w, num in zip(values, widths, numeric)).rstrip()
    out = [fmt(titles), fmt(["-" * w for w in widths])]
    out.extend(fmt(r) for r in cells)
    if max_rows is not None and len(rows) > max_rows:
        out.append(f"... {len(rows) - max_rows} more rows (use --format csv or --output for all)")
    return "\n".join(out) + "\n"


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


#: what a terminal would act on (a tab only moves the cursor and stays as it is)
_UNPRINTABLE = re.compile(r"[\x00-\x08\x0a-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")


def printable(text: str) -> str:
    r"""Text safe to print on a terminal: control characters shown as ``\u001b`` instead of acting.

    Examples
    --------
    >>> printable("red\x1b[31m") == "red\\u001b[31m"
    True
    """
    return _UNPRINTABLE.sub(lambda m: f"\\u{ord(m.group()):04x}", text)
