"""Reading measured one-dimensional spectra: CSV/TSV text files and FITS.

Text files have a header line naming the columns: the axis, exactly one of
``wavelength_nm`` or ``pixel``; ``intensity``; optionally ``intensity_unc``
(standard uncertainty of each intensity). Cells are separated by commas, or by
tabs when the header line holds a tab. Lines starting with ``#`` are comments;
a comment ``# medium: air`` (or ``vacuum``) says in which medium the
wavelengths are. A cell may repeat the column's unit (``656.3nm``); any other
unit is refused (mixed units).

FITS files (astropy, an optional dependency) hold either a one-dimensional
primary image with a linear wavelength axis in the header (``CRVAL1``,
``CDELT1`` or ``CD1_1``, ``CRPIX1``, ``CUNIT1`` in nm, Angstrom or m; without
these the axis is the pixel number) or a binary table with the columns above.

Every problem names file, line (or header card / table row) and field; the
axis must be strictly monotonic (a decreasing axis is reversed), with no
repeated samples, and every value finite.
"""

from __future__ import annotations

import csv
import math
import os
import re
from dataclasses import dataclass

import numpy as np

from levels.errors import InputFileError, Problem
from levels.io.tables import MAX_PROBLEMS, decode_lines, read_source

__all__ = ["SpectrumData", "read_spectrum", "AXIS_COLUMNS", "SPECTRUM_COLUMNS"]

AXIS_COLUMNS = ("wavelength_nm", "pixel")
SPECTRUM_COLUMNS = AXIS_COLUMNS + ("intensity", "intensity_unc")
FITS_SUFFIXES = (".fits", ".fit", ".fts", ".fits.gz")
_UNIT_OF = {
    "wavelength_nm": "nm",
    "pixel": "px",
    "intensity": None,
    "intensity_unc": None,
    "peak_nm": "nm",
    "peak_unc_nm": "nm",
    "fwhm_nm": "nm",
    "fwhm_unc_nm": "nm",
    "unc_nm": "nm",
}
_NUMBER_UNIT = re.compile(
    r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|inf|infinity))\s*([A-Za-zµÅ]+)?\s*$", re.IGNORECASE
)


@dataclass(frozen=True)
class SpectrumData:
    """A validated spectrum: increasing axis, intensities, optional uncertainties.

    ``axis`` is ``"wavelength_nm"`` or ``"pixel"``; ``medium`` is ``"air"``,
    ``"vacuum"`` or ``None`` (not stated); ``line_of`` gives the file line of each
    sample (after sorting), for messages.
    """

    source: str
    axis: str
    x: np.ndarray
    intensity: np.ndarray
    intensity_unc: np.ndarray | None
    medium: str | None
    line_of: np.ndarray

    def __len__(self) -> int:
        return int(self.x.size)


def read_spectrum(path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None) -> SpectrumData:
    """Read and validate a spectrum file (CSV/TSV or FITS).

    Parameters
    ----------
    path_or_bytes : path or bytes
        The file, or its content (an upload).
    source : str, optional
        Name used in messages (default: the file name); its suffix picks FITS for bytes.

    Returns
    -------
    SpectrumData

    Raises
    ------
    InputFileError
        Every problem found, each naming file, line and field.

    Examples
    --------
    >>> text = b"# medium: air\\nwavelength_nm,intensity\\n500.0,1\\n500.1,3\\n500.2,2\\n"
    >>> data = read_spectrum(text, source="s.csv")
    >>> data.axis, data.medium, data.intensity.tolist()
    ('wavelength_nm', 'air', [1.0, 3.0, 2.0])
    """
    name, data = read_source(path_or_bytes, source)
    if data[:9] == b"SIMPLE  =" or name.lower().endswith(FITS_SUFFIXES):
        return _read_fits(name, data)
    return _read_text(name, data)


def _parse_cell(text: str, column: str, source: str, line: int, problems: list[Problem]) -> float | None:
    m = _NUMBER_UNIT.match(text)
    if not text.strip():
        problems.append(Problem(source, line, column, "empty value; every sample needs a number"))
        return None
    if m is None:
        problems.append(Problem(source, line, column, f"{text.strip()!r} is not a number"))
        return None
    value, unit = m.group(1), m.group(2)
    expected = _UNIT_OF.get(column)
    if unit is not None and unit != expected:
        what = f"the column is in {expected}" if expected else "the column takes plain numbers"
        problems.append(
            Problem(source, line, column, f"mixed units: {text.strip()!r} carries the unit {unit!r} but {what}")
        )
        return None
    number = float(value)
    if not math.isfinite(number):
        problems.append(Problem(source, line, column, f"{text.strip()!r} is not a finite number (NaN or infinity)"))
        return None
    return number


def _read_text(name: str, data: bytes) -> SpectrumData:
    lines = decode_lines(name, data)
    medium = None
    problems: list[Problem] = []
    index = 0
    while index < len(lines) and (not lines[index].strip() or lines[index].lstrip().startswith("#")):
        m = re.match(r"^\s*#\s*medium\s*[:=]\s*(\S+)", lines[index], re.IGNORECASE)
        if m:
            medium = m.group(1).lower()
            if medium not in ("air", "vacuum"):
                problems.append(
                    Problem(name, index + 1, "medium", f"{m.group(1)!r} is not a medium; write air or vacuum")
                )
        index += 1
    if index == len(lines):
        raise InputFileError([Problem(name, None, None, "no header line; the file holds only comments or blank lines")])
    header_line = index + 1
    delimiter = "\t" if "\t" in lines[index] else ","
    header = [c.strip() for c in next(csv.reader([lines[index]], delimiter=delimiter))]
    seen = set()
    for col in header:
        if col in seen:
            problems.append(Problem(name, header_line, col, "column appears twice in the header"))
        seen.add(col)
        if col not in SPECTRUM_COLUMNS:
            hint = (
                " (say the unit: wavelength_nm, or pixel)"
                if col.lower().startswith(("wavelength", "lambda", "wl"))
                else ""
            )
            problems.append(
                Problem(
                    name,
                    header_line,
                    col or None,
                    f"unknown column{hint}; known columns are {', '.join(SPECTRUM_COLUMNS)}",
                )
            )
    axes = [c for c in AXIS_COLUMNS if c in seen]
    if len(axes) == 2:
        problems.append(
            Problem(
                name, header_line, "pixel", "mixed units: the file has both a wavelength_nm and a pixel axis; keep one"
            )
        )
    elif not axes:
        problems.append(
            Problem(name, header_line, "wavelength_nm", "required axis column is missing: give wavelength_nm or pixel")
        )
    if "intensity" not in seen:
        problems.append(Problem(name, header_line, "intensity", "required column is missing from the header"))
    if problems:
        raise InputFileError(problems)
    axis = axes[0]
    cols: dict[str, list[float]] = {c: [] for c in header}
    numbers: list[int] = []
    for number, text in enumerate(lines[index + 1 :], start=index + 2):
        if not text.strip() or text.lstrip().startswith("#"):
            continue
        cells = next(csv.reader([text], delimiter=delimiter))
        if len(cells) != len(header):
            problems.append(
                Problem(name, number, None, f"expected {len(header)} fields as in the header, found {len(cells)}")
            )
        else:
            values = [_parse_cell(cell, col, name, number, problems) for col, cell in zip(header, cells)]
            if all(v is not None for v in values):
                for col, v in zip(header, values):
                    if v is not None:
                        cols[col].append(v)
                numbers.append(number)
        if len(problems) >= MAX_PROBLEMS:
            break
    if problems:
        raise InputFileError(problems)
    if not numbers:
        raise InputFileError([Problem(name, header_line, None, "the header is not followed by any data row")])
    unc = np.array(cols["intensity_unc"]) if "intensity_unc" in cols else None
    return _validated(
        name,
        axis,
        np.array(cols[axis]),
        np.array(cols["intensity"]),
        unc,
        medium,
        np.array(numbers),
        lambda i: f"line {i}",
    )


def _validated(
    name: str,
    axis: str,
    x: np.ndarray,
    y: np.ndarray,
    unc: np.ndarray | None,
    medium: str | None,
    where: np.ndarray,
    describe,
    line_numbers: bool = True,
) -> SpectrumData:
    """Checks shared by text and FITS: finite, monotonic, no repeats, positive uncertainties, >= 3 samples."""
    problems: list[Problem] = []

    def at(i: int) -> int | None:
        return int(where[i]) if line_numbers else None

    def prefix(i: int) -> str:
        return "" if line_numbers else f"{describe(int(where[i]))}: "

    for col, arr in (("intensity", y), (axis, x)) + ((("intensity_unc", unc),) if unc is not None else ()):
        bad = np.flatnonzero(~np.isfinite(arr))
        for i in bad[:10]:
            problems.append(Problem(name, at(i), col, f"{prefix(i)}not a finite number (NaN or infinity)"))
    if unc is not None:
        for i in np.flatnonzero(np.isfinite(unc) & (unc <= 0))[:10]:
            problems.append(
                Problem(name, at(i), "intensity_unc", f"{prefix(i)}uncertainty must be > 0, got {unc[i]:g}")
            )
    if axis == "wavelength_nm":
        for i in np.flatnonzero(np.isfinite(x) & (x <= 0))[:10]:
            problems.append(Problem(name, at(i), axis, f"{prefix(i)}a wavelength must be > 0 nm, got {x[i]:g}"))
    if problems:
        raise InputFileError(problems)
    if x.size < 3:
        raise InputFileError(
            [Problem(name, at(x.size - 1), None, f"a spectrum needs at least 3 samples, found {x.size}")]
        )
    d = np.diff(x)
    same = np.flatnonzero(d == 0)
    for i in same[:10]:
        problems.append(
            Problem(
                name,
                at(i + 1),
                axis,
                f"{prefix(i + 1)}duplicate sample: {axis} {x[i + 1]:.10g} already given on {describe(int(where[i]))}",
            )
        )
    if problems:
        raise InputFileError(problems)
    direction = np.sign(d[0])
    turn = np.flatnonzero(np.sign(d) != direction)
    if turn.size:
        i = int(turn[0]) + 1
        word = "increasing" if direction > 0 else "decreasing"
        raise InputFileError(
            [
                Problem(
                    name,
                    at(i),
                    axis,
                    f"{prefix(i)}the axis is not monotonic: {x[i]:.10g} after "
                    f"{x[i - 1]:.10g} breaks the {word} order; sort the samples",
                )
            ]
        )
    if direction < 0:
        x, y, where = x[::-1], y[::-1], where[::-1]
        unc = None if unc is None else unc[::-1]
    return SpectrumData(
        name, axis, x.astype(float), y.astype(float), None if unc is None else unc.astype(float), medium, where
    )


def _read_fits(name: str, data: bytes) -> SpectrumData:
    try:
        from astropy.io import fits
    except ImportError:  # pragma: no cover - astropy is installed with levels' optional extra
        raise InputFileError([Problem(name, None, None, "reading FITS needs astropy (pip install astropy)")]) from None
    import io
    import warnings

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            hdul = fits.open(io.BytesIO(data), memmap=False)
            hdul.verify("silentfix")
    except Exception as exc:  # astropy raises many kinds on a broken file
        raise InputFileError([Problem(name, None, None, f"not a readable FITS file: {exc}")]) from None
    with hdul:
        primary = hdul[0]
        if primary.data is not None and primary.data.size:
            return _fits_image(name, primary)
        for number, hdu in enumerate(hdul[1:], start=1):
            if isinstance(hdu, fits.BinTableHDU):
                return _fits_table(name, number, hdu)
    raise InputFileError([Problem(name, None, None, "the FITS file holds neither a 1-D spectrum image nor a table")])


def _fits_image(name: str, hdu) -> SpectrumData:
    header = hdu.header
    y = np.asarray(hdu.data, dtype=float)
    if y.ndim != 1:
        raise InputFileError(
            [Problem(name, None, "NAXIS", f"expected a one-dimensional spectrum, found {y.ndim} axes")]
        )
    pix = np.arange(1, y.size + 1, dtype=float)
    if "CRVAL1" in header:
        step = header.get("CDELT1", header.get("CD1_1"))
        if step is None:
            raise InputFileError([Problem(name, None, "CDELT1", "CRVAL1 is given but neither CDELT1 nor CD1_1")])
        unit = str(header.get("CUNIT1", "nm")).strip()
        scale = {"nm": 1.0, "angstrom": 0.1, "Angstrom": 0.1, "A": 0.1, "m": 1e9, "um": 1e3}.get(unit)
        if scale is None:
            raise InputFileError(
                [Problem(name, None, "CUNIT1", f"unknown wavelength unit {unit!r}; use nm, Angstrom or m")]
            )
        x = (header["CRVAL1"] + (pix - header.get("CRPIX1", 1.0)) * step) * scale
        axis = "wavelength_nm"
    else:
        x, axis = pix - 1.0, "pixel"
    medium = str(header.get("AIRORVAC", header.get("MEDIUM", ""))).strip().lower() or None
    medium = {"air": "air", "vac": "vacuum", "vacuum": "vacuum"}.get(medium or "", None)
    return _validated(
        name, axis, x, y, None, medium, np.arange(y.size), lambda i: f"sample {i + 1}", line_numbers=False
    )


def _fits_table(name: str, number: int, hdu) -> SpectrumData:
    names = [c.name for c in hdu.columns]
    lower = {n.lower(): n for n in names}
    axes = [c for c in AXIS_COLUMNS if c in lower]
    problems = []
    if len(axes) != 1:
        problems.append(
            Problem(
                name,
                None,
                "wavelength_nm",
                f"table HDU {number}: give exactly one of wavelength_nm or pixel (found {', '.join(names)})",
            )
        )
    if "intensity" not in lower:
        problems.append(Problem(name, None, "intensity", f"table HDU {number}: required column is missing"))
    if problems:
        raise InputFileError(problems)
    axis = axes[0]
    x = np.asarray(hdu.data[lower[axis]], dtype=float)
    y = np.asarray(hdu.data[lower["intensity"]], dtype=float)
    unc = np.asarray(hdu.data[lower["intensity_unc"]], dtype=float) if "intensity_unc" in lower else None
    medium = str(hdu.header.get("MEDIUM", "")).strip().lower() or None
    return _validated(
        name,
        axis,
        x,
        y,
        unc,
        medium if medium in ("air", "vacuum") else None,
        np.arange(x.size),
        lambda i: f"table HDU {number} row {i + 1}",
        line_numbers=False,
    )


# ----------------------------------------------------------------- peaks files and calibrations

#: columns a peaks file may hold (what ``levels peaks`` writes, plus the identify file's own)
MEASURED_PEAK_COLUMNS = (
    "peak_nm",
    "peak_unc_nm",
    "medium",
    "fwhm_nm",
    "area",
    "area_unc",
    "snr",
    "fwhm_unc_nm",
    "unc_nm",
    "intensity",
    "note",
)


@dataclass(frozen=True)
class MeasuredPeak:
    """One row of a peaks file: centre (nm), medium, and what the fit measured (None where absent)."""

    peak_nm: float
    medium: str
    peak_unc_nm: float | None
    fwhm_nm: float | None
    fwhm_unc_nm: float | None
    intensity: float | None
    intensity_unc: float | None
    snr: float | None
    note: str
    line: int


def read_peaks(
    path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None, default_medium: str = "air"
) -> list[MeasuredPeak]:
    """Read a peaks file as ``levels peaks`` writes it (or an identify peaks file).

    ``peak_nm`` is required; the intensity is ``area`` or, without it, ``intensity``;
    the centre uncertainty ``peak_unc_nm`` or ``unc_nm``.

    Raises
    ------
    InputFileError
        Unknown columns, bad numbers, unknown media - each naming file, line and field.

    Examples
    --------
    >>> rows = read_peaks(b"peak_nm,peak_unc_nm,medium,fwhm_nm,area,area_unc,snr\\n656.28,0.001,air,0.1,5,0.1,80\\n",
    ...                   source="p.csv")
    >>> rows[0].intensity, rows[0].medium
    (5.0, 'air')
    """
    from levels.io.tables import read_delimited

    table = read_delimited(
        path_or_bytes, source=source, known_columns=MEASURED_PEAK_COLUMNS, required_columns=("peak_nm",)
    )
    problems: list[Problem] = []
    out = []
    for line, fields in table.rows:
        values: dict[str, float | None] = {}
        ok = True
        for col in (
            "peak_nm",
            "peak_unc_nm",
            "fwhm_nm",
            "fwhm_unc_nm",
            "area",
            "area_unc",
            "snr",
            "unc_nm",
            "intensity",
        ):
            text = fields.get(col, "")
            if not text:
                values[col] = None
                if col == "peak_nm":
                    problems.append(Problem(table.source, line, col, "a value is required"))
                    ok = False
                continue
            before = len(problems)
            v = _parse_cell(text, col, table.source, line, problems)
            if v is None or len(problems) > before:
                ok = False
                continue
            if col in ("peak_nm", "fwhm_nm") and v <= 0 or col in ("peak_unc_nm", "unc_nm", "fwhm_unc_nm") and v <= 0:
                problems.append(Problem(table.source, line, col, f"{text!r} must be greater than zero"))
                ok = False
            if col in ("area", "intensity") and v < 0:
                problems.append(Problem(table.source, line, col, f"{text!r} must not be negative"))
                ok = False
            values[col] = v
        medium = (fields.get("medium") or default_medium).lower()
        if medium not in ("air", "vacuum"):
            problems.append(
                Problem(table.source, line, "medium", f"{fields.get('medium')!r} is not a medium; write air or vacuum")
            )
            ok = False
        peak_nm = values["peak_nm"]
        if ok and peak_nm is not None:
            area = values["area"] if values["area"] is not None else values["intensity"]
            out.append(
                MeasuredPeak(
                    peak_nm,
                    medium,
                    values["peak_unc_nm"] or values["unc_nm"],
                    values["fwhm_nm"],
                    values["fwhm_unc_nm"],
                    area,
                    values["area_unc"] if values["area"] is not None else None,
                    values["snr"],
                    fields.get("note", ""),
                    line,
                )
            )
        if len(problems) >= MAX_PROBLEMS:
            break
    if problems:
        raise InputFileError(problems)
    return out


@dataclass(frozen=True)
class Calibration:
    """A dispersion polynomial read back from its JSON file."""

    source: str
    degree: int
    coefficients: tuple[float, ...]
    medium: str
    axis: str
    rms_nm: float | None
    pixel_range: tuple[float, float] | None


def read_calibration(path_or_bytes: str | os.PathLike | bytes, *, source: str | None = None) -> Calibration:
    """Read a calibration file as ``levels calibrate`` writes it.

    Raises
    ------
    InputFileError
        Not JSON, missing or malformed fields (named), unknown medium.

    Examples
    --------
    >>> cal = read_calibration(b'{"degree": 1, "coefficients": [400, 0.1], "medium": "air", "rms_nm": 0.001}')
    >>> cal.coefficients, cal.medium
    ((400.0, 0.1), 'air')
    """
    import json

    name, data = read_source(path_or_bytes, source or "<calibration>")
    try:
        payload = json.loads(data.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        line = getattr(exc, "lineno", None)
        raise InputFileError([Problem(name, line, None, f"not a calibration JSON file: {exc}")]) from None
    if not isinstance(payload, dict):
        raise InputFileError([Problem(name, None, None, "expected a JSON object with degree and coefficients")])
    problems = []
    degree = payload.get("degree")
    coef = payload.get("coefficients")
    if isinstance(degree, bool) or not isinstance(degree, int) or not 0 <= degree <= 7:
        problems.append(Problem(name, None, "degree", f"must be an integer 0..7, got {degree!r}"))
    if (
        not isinstance(coef, list)
        or not coef
        or not all(isinstance(c, (int, float)) and not isinstance(c, bool) and math.isfinite(c) for c in coef)
    ):
        problems.append(Problem(name, None, "coefficients", "must be a list of finite numbers (ascending powers)"))
    elif isinstance(degree, int) and len(coef) != degree + 1:
        problems.append(
            Problem(
                name,
                None,
                "coefficients",
                f"a degree-{degree} polynomial has {degree + 1} coefficients, found {len(coef)}",
            )
        )
    medium = payload.get("medium", "air")
    if medium not in ("air", "vacuum"):
        problems.append(Problem(name, None, "medium", f"{medium!r} is not a medium; write air or vacuum"))
    if problems:
        raise InputFileError(problems)
    rng = payload.get("pixel_range")
    assert isinstance(degree, int) and isinstance(coef, list)  # checked above
    return Calibration(
        name,
        degree,
        tuple(float(c) for c in coef),
        medium,
        str(payload.get("axis", "pixel")),
        payload.get("rms_nm"),
        tuple(rng) if isinstance(rng, list) and len(rng) == 2 else None,
    )
