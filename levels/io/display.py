"""How numbers are shown to people: one policy for the CLI's tables and the web pages.

Machine formats (JSON, CSV, ECSV) keep full precision; this module is for
people only. The policy:

* a value with a known uncertainty is rounded to the digits its uncertainty
  supports, the uncertainty itself to two significant digits
  (``109678.7717 ± 0.0024``);
* a value without one keeps enough digits to separate every distinct value of
  its column (at least eight significant digits, never more than the 15 a float
  holds), so two fine-structure components never print alike; its trailing
  zeros are dropped (they would claim a precision nobody stated);
* a column is either fixed-point or scientific as a whole, never mixed: it is
  scientific when its non-zero magnitudes reach 1e7 or fall below 1e-3, or
  span more than five decades;
* an exact zero, or a value that rounds to zero at the column's precision,
  prints as ``0``; missing values (None, NaN) print as an empty cell.

The two-significant-digit rule for the uncertainty is common practice, no source.

Words follow the same split: configurations and level labels are shown with spaces between
subshells (``1s2 2s2 2p6 3s 2S1/2``; :func:`display_text_columns`), while files keep the stored
form with dots, which every input accepts (``levels.notation.label_key`` reads both).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from typing import TypeGuard

from levels.notation import display_configuration, display_label

__all__ = ["CONFIGURATION_COLUMNS", "LEVEL_LABEL_COLUMNS", "UNCERTAINTY_OF", "column_style",
           "display_text_columns", "format_column", "format_number", "format_rows", "format_uncertainty",
           "format_with_uncertainty", "is_uncertainty_column"]

#: significant digits of a value without an uncertainty (the least shown)
MIN_SIGNIFICANT = 8
#: significant digits past which a float's digits are noise
MAX_SIGNIFICANT = 15
#: mantissa decimals of a scientific column without uncertainties (the least shown)
SCIENTIFIC_DECIMALS = 3
#: significant digits kept of an uncertainty
UNC_SIGNIFICANT = 2


def _finite(value: object) -> TypeGuard[float]:
    """A finite int or float (not a bool): a value the display rounds."""
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)


def _exponent(value: float) -> int:
    return math.floor(math.log10(abs(value)))


def column_style(values: Sequence, smallest_fixed: float = 1e-3) -> str:
    """``"fixed"`` or ``"scientific"`` for a whole column of numbers.

    Parameters
    ----------
    values : sequence of float or None
        The column's values; None, NaN, zeros and values below 1e-9 of the
        largest (rounding noise of a zero) do not decide.
    smallest_fixed : float
        The smallest magnitude shown in fixed point (uncertainty columns use 1e-6).

    Returns
    -------
    str
        ``"scientific"`` when a non-zero magnitude reaches 1e7 or falls below
        1e-3, or the magnitudes span more than five decades; else ``"fixed"``.

    Examples
    --------
    >>> column_style([0.0, 71202.4362, 1183600.0])
    'fixed'
    >>> column_style([4.41e7, 2.2e6])
    'scientific'
    >>> column_style([0.64, 1.3e-5])
    'scientific'
    """
    mags = [abs(float(v)) for v in values if _finite(v) and v != 0]
    if not mags:
        return "fixed"
    hi = max(mags)
    lo = min(m for m in mags if m > 1e-9 * hi)
    if hi >= 1e7 or lo < smallest_fixed or hi / lo > 1e5:
        return "scientific"
    return "fixed"


def _unc_decimals(unc: float) -> int:
    """Decimals that keep two significant digits of ``unc`` (may be negative)."""
    return UNC_SIGNIFICANT - 1 - _exponent(unc)


def _fixed(value: float, decimals: int) -> str:
    if decimals < 0:
        scale = 10.0 ** (-decimals)
        value = round(value / scale) * scale
        decimals = 0
    text = f"{value:.{decimals}f}"
    if float(text) == 0.0:
        return "0"
    return text


def _scientific(value: float, mantissa_decimals: int) -> str:
    if value == 0:
        return "0"
    return f"{value:.{max(mantissa_decimals, 0)}e}"


def format_uncertainty(unc) -> str:
    """An uncertainty with two significant digits (empty when missing or not positive).

    Examples
    --------
    >>> format_uncertainty(0.02422009211419176)
    '0.024'
    >>> format_uncertainty(1234.5)
    '1200'
    >>> format_uncertainty(None)
    ''
    """
    if not _finite(unc) or unc <= 0:
        return ""
    unc = float(unc)
    exp = _exponent(unc)
    if exp >= 7 or exp < -6:
        return f"{unc:.{UNC_SIGNIFICANT - 1}e}"
    return _fixed(unc, _unc_decimals(unc))


def format_column(values: Sequence, uncertainties: Sequence | None = None, *, min_significant: int = MIN_SIGNIFICANT,
                  style: str | None = None) -> list[str]:
    """Text of a column of numbers under the display policy (see the module docstring).

    Parameters
    ----------
    values : sequence of float or int or None
        The column (units are the caller's; the text carries none).
    uncertainties : sequence of float or None, optional
        One standard uncertainty per value, same unit; None or 0 where unknown.
    min_significant : int
        Significant digits shown of values without an uncertainty, at least.
    style : {"fixed", "scientific"}, optional
        Force the column's style; by default :func:`column_style` decides.

    Returns
    -------
    list of str
        One string per value; ``""`` for None or NaN, ``"0"`` for zero.

    Examples
    --------
    >>> format_column([109678.77174237584, 82259.15840321, 0.0, -3.638e-12])
    ['109678.77', '82259.16', '0', '0']
    >>> format_column([3705112.96, 3705113.01])
    ['3705112.96', '3705113.01']
    >>> format_column([12810.095139301811], [0.02422009211419176])
    ['12810.095']
    >>> format_column([4.41e7, 2.2e6, None])
    ['4.41e+07', '2.2e+06', '']
    >>> format_column([7, 12])
    ['7', '12']
    """
    vals = list(values)
    uncs = list(uncertainties) if uncertainties is not None else [None] * len(vals)
    if len(uncs) != len(vals):
        raise ValueError("values and uncertainties differ in length")
    if all(v is None or (isinstance(v, int) and not isinstance(v, bool)) for v in vals):
        return ["" if v is None else str(v) for v in vals]
    style = style or column_style(vals)
    if style not in ("fixed", "scientific"):
        raise ValueError(f"unknown style {style!r}")
    out = [""] * len(vals)
    free: list[int] = []
    for i, (v, u) in enumerate(zip(vals, uncs)):
        if not _finite(v):
            continue
        v = float(v)
        if _finite(u) and u > 0:
            if style == "fixed":
                out[i] = _fixed(v, _unc_decimals(float(u)))
            else:
                digits = (_exponent(v) if v != 0 else _exponent(float(u))) - _exponent(float(u)) + UNC_SIGNIFICANT - 1
                out[i] = _scientific(v, digits)
        else:
            free.append(i)
    if not free:
        return out
    free_vals = [float(vals[i]) for i in free]
    nonzero = [abs(v) for v in free_vals if v != 0]
    if style == "fixed":
        top = _exponent(max(nonzero)) if nonzero else 0
        digits = max(0, min_significant - 1 - top)
        limit = max(digits, MAX_SIGNIFICANT - 1 - top)
        render: Callable[[float, int], str] = _fixed
    else:
        digits = SCIENTIFIC_DECIMALS
        limit = MAX_SIGNIFICANT - 1
        render = _scientific
    while True:
        texts = [render(v, digits) for v in free_vals]
        if digits >= limit or _separates(free_vals, texts, max(nonzero, default=0.0)):
            break
        digits += 1
    for i, text in zip(free, texts):
        out[i] = _strip_zeros(text)
    return out


def _strip_zeros(text: str) -> str:
    """Trailing zeros of a value without uncertainty claim nothing (``1.5000`` -> ``1.5``)."""
    mantissa, sep, exponent = text.partition("e")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return mantissa + sep + exponent


def _separates(values: list[float], texts: list[str], scale: float) -> bool:
    """Whether values that differ beyond float noise (1e-12 of the column's largest) print differently."""
    seen: dict[str, float] = {}
    for v, t in zip(values, texts):
        other = seen.setdefault(t, v)
        if abs(other - v) > 1e-12 * scale:
            return False
    return True


def format_number(value, unc=None) -> str:
    """One number under the display policy (its own column).

    Examples
    --------
    >>> format_number(109678.77174237584)
    '109678.77'
    >>> format_number(109678.77174237584, 0.0024)
    '109678.7717'
    >>> format_number(0.0)
    '0'
    >>> format_number(None)
    ''
    """
    return format_column([value], [unc])[0]


def format_with_uncertainty(value, unc=None, unit: str = "") -> str:
    """``value ± unc unit`` under the display policy (without ``±`` when the uncertainty is unknown).

    Examples
    --------
    >>> format_with_uncertainty(12810.095139301811, 0.02422009211419176, "cm-1")
    '12810.095 ± 0.024 cm-1'
    >>> format_with_uncertainty(43487.114, None)
    '43487.114'
    >>> format_with_uncertainty(1.645e-4, 9.7e-6)
    '1.645e-04 ± 9.7e-06'
    """
    text = format_number(value, unc)
    if not text:
        return ""
    unc_text = format_uncertainty(unc)
    if unc_text and "e" in text:  # a value in scientific notation takes its uncertainty in the same style
        unc_text = f"{float(unc):.{UNC_SIGNIFICANT - 1}e}"
    if unc_text:
        text = f"{text} ± {unc_text}"
    return f"{text} {unit}" if unit else text


#: value column -> the column holding its standard uncertainty (same unit), in the project's row contracts
UNCERTAINTY_OF: dict[str, str] = {
    "energy_cm1": "unc_cm1",
    "ionization_cm1": "ionization_unc_cm1",
    "limit_cm1": "limit_unc_cm1",
    "peak_nm": "peak_unc_nm",
    "vacuum_nm": "unc_nm",
    "air_nm": "unc_nm",
    "area": "area_unc",
    "te_k": "te_unc_k",
    "ne_m3": "ne_unc_m3",
    # a line list's position column in the unit asked (levels.service.vocabulary.add_spectral_column)
    **{name: f"{name}_unc" for name in ("wavelength_nm", "wavelength_angstrom", "wavelength_um", "wavenumber_cm1",
                                        "photon_energy_ev", "photon_energy_kev", "frequency_hz")},
}


def is_uncertainty_column(name: str) -> bool:
    """Whether a column holds uncertainties (shown with two significant digits).

    Examples
    --------
    >>> is_uncertainty_column("unc_cm1"), is_uncertainty_column("lifetime_rel_unc"), is_uncertainty_column("n")
    (True, True, False)
    """
    return name.startswith("unc_") or "_unc" in name


#: value columns converted from vacuum to air by the tool: their uncertainty includes the air formula's own
CONVERTED_TO_AIR = ("air_nm",)


def with_air_conversion(value, unc):
    """The standard uncertainty of an air wavelength converted from vacuum: the vacuum value's and the air
    formula's (:data:`levels.physics.lines.air.CONVERSION_REL_UNC`) in quadrature; None for a missing value.

    Examples
    --------
    >>> round(with_air_conversion(500.0, None), 12)
    1e-05
    >>> f"{with_air_conversion(500.0, 3e-5):.3g}"
    '3.16e-05'
    """
    from levels.physics.lines.air import CONVERSION_REL_UNC

    if not _finite(value):
        return None
    floor = CONVERSION_REL_UNC * abs(float(value))
    return math.hypot(float(unc), floor) if _finite(unc) and unc > 0 else floor


def format_rows(rows: Sequence, columns: Sequence[str]) -> list[list[str]]:
    """Cells of a table (rows of mappings) under the display policy, column by column.

    Uncertainty columns keep two significant digits; a value column named in
    :data:`UNCERTAINTY_OF` is rounded to its uncertainty where the row has one.
    Non-numeric cells are returned as ``str`` (None as ``""``).

    Examples
    --------
    >>> format_rows([{"label": "2p 2P°1/2", "energy_cm1": 82258.9191133, "unc_cm1": 0.00021}],
    ...             ["label", "energy_cm1", "unc_cm1"])
    [['2p 2P°1/2', '82258.91911', '0.00021']]
    >>> format_rows([{"air_nm": 402.5476573678, "unc_nm": 1e-10}], ["air_nm"])  # the air formula's floor
    [['402.5476574']]
    """
    cols: list[list[str]] = []
    for c in columns:
        vals = [row.get(c) for row in rows]
        numeric = [v for v in vals if v is not None and not (isinstance(v, float) and math.isnan(v))]
        if numeric and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in numeric):
            if is_uncertainty_column(c):
                cols.append(format_column(vals, vals, style=column_style(vals, smallest_fixed=1e-6)))
            else:
                unc_col = UNCERTAINTY_OF.get(c)
                uncs = [row.get(unc_col) for row in rows] if unc_col else None
                if c in CONVERTED_TO_AIR:
                    uncs = [with_air_conversion(v, u) for v, u in zip(vals, uncs or [None] * len(vals))]
                cols.append(format_column(vals, uncs))
        else:
            cols.append([format_number(v) if isinstance(v, float) else "" if v is None else str(v) for v in vals])
    return [list(r) for r in zip(*cols)] if cols else [[] for _ in rows]


#: columns that hold a level label (a level's own, a line's two levels) in every row shape
LEVEL_LABEL_COLUMNS = ("label", "lower", "upper")
#: columns that hold a configuration
CONFIGURATION_COLUMNS = ("configuration",)


def display_text_columns(rows: Sequence[Mapping], columns: Sequence[str] | None = None, *,
                         superscripts: bool = False) -> list[dict]:
    """Copies of ``rows`` whose level-label and configuration cells read as people write them.

    Labels go through :func:`levels.notation.display_label`, configurations through
    :func:`levels.notation.display_configuration` (spaces between subshells, optionally superscript
    occupancies); other cells and the rows themselves are not changed. For tables shown to people
    only: exports keep the stored form.

    >>> display_text_columns([{"lower": "1s2.2s 2S1/2", "upper": "1s2.2p 2P°3/2", "vacuum_nm": 670.96}])
    [{'lower': '1s2 2s 2S1/2', 'upper': '1s2 2p 2P°3/2', 'vacuum_nm': 670.96}]
    """
    names = set(columns) if columns is not None else None
    labels = [c for c in LEVEL_LABEL_COLUMNS if names is None or c in names]
    configs = [c for c in CONFIGURATION_COLUMNS if names is None or c in names]
    out = []
    for row in rows:
        shown = dict(row)
        for name in labels:
            if isinstance(shown.get(name), str):
                shown[name] = display_label(shown[name], superscripts=superscripts)
        for name in configs:
            if isinstance(shown.get(name), str):
                shown[name] = display_configuration(shown[name], superscripts=superscripts)
        out.append(shown)
    return out
