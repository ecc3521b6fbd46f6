"""Reading filters and paging from query strings and forms.

Every filter of the site lives in the query string, so a page is a permalink.
Each parser here takes the raw text of one parameter and returns a typed value,
or raises :class:`BadParameter` naming the parameter and what is wrong with it;
the views turn that into a 400 response (HTML page or JSON error). Nothing here
touches the store.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, replace

from levels.errors import LevelsError, NotationError, UnitError
from levels.notation import Spectrum, format_j, parse_j
from levels.service.contract import MULTIPOLE_CODES, LineQuery
from levels.service.vocabulary import DEFAULT_MEDIUM
from levels.units import parse_quantity

#: longest text accepted in any filter field (characters)
MAX_PARAM_CHARS = 200
#: largest page number / offset accepted (keeps SQL OFFSET values sane)
MAX_OFFSET = 10**9
#: largest row id looked up (the stores' integer keys are 64-bit)
MAX_ID = 2**62
PER_PAGE_CHOICES = (25, 50, 100, 200)
API_MAX_LIMIT = 1000
API_DEFAULT_LIMIT = 100
DIAGRAM_MAX_LINES_CAP = 5000
ENERGY_UNITS = ("cm-1", "eV")
LINE_ORDERS = {"wavelength": "wavelength", "-wavelength": "-wavelength", "a": "a", "strength": "strength"}
_DIGITS = re.compile(r"\+?[0-9]{1,15}")
LEVEL_SORTS = ("energy", "label", "configuration", "term", "j", "unc", "dataset")


class BadParameter(LevelsError, ValueError):
    """A query-string or form value that cannot be used; ``field`` names the parameter."""

    def __init__(self, field: str, message: str):
        self.field = field
        self.message = message
        super().__init__(f"{field}: {message}")


def text_param(args: Mapping, name: str) -> str:
    value = args.get(name, "")
    if value is None:
        return ""
    value = str(value).strip()
    if len(value) > MAX_PARAM_CHARS:
        raise BadParameter(name, f"is longer than {MAX_PARAM_CHARS} characters")
    if "\x00" in value:
        raise BadParameter(name, "contains a NUL character")
    return value


def list_param(args: Mapping, name: str) -> list[str]:
    if hasattr(args, "getlist"):
        raw = args.getlist(name)
    else:
        value = args.get(name)
        raw = [] if value is None else (list(value) if isinstance(value, (list, tuple)) else [value])
    out: list[str] = []
    for item in raw:
        text = str(item).strip()
        if len(text) > MAX_PARAM_CHARS:
            raise BadParameter(name, f"is longer than {MAX_PARAM_CHARS} characters")
        out.extend(part.strip() for part in text.split(",") if part.strip())
    return out


def wavelength(args: Mapping, name: str, *, strict: bool = False) -> float | None:
    """A wavelength in nm: a bare number means nm; ``6563A``, ``0.5um`` are converted (not when ``strict``)."""
    text = text_param(args, name)
    if not text:
        return None
    if strict:
        value = number(args, name)
        if value is None or value <= 0:
            raise BadParameter(name, f"{text!r} must be a positive number of nanometres")
        return value
    try:
        value = parse_quantity(text, "length", default_unit="nm") * 1e9
    except UnitError as exc:
        raise BadParameter(name, f"{text!r} is not a wavelength (write 400 or 400nm or 4000A): {exc}") from None
    if not math.isfinite(value) or value <= 0:
        raise BadParameter(name, f"{text!r} must be a positive wavelength")
    return value


def spectral(args: Mapping, name: str, medium: str) -> tuple[float, bool] | None:
    """A window bound in any spectral unit (``486nm``, ``4861A``, ``20570cm-1``, ``2.55eV``, ``617THz``).

    Returns (the wavelength in nm in ``medium``, whether it was typed as a length). A bare number means nm.
    A wavenumber, energy or frequency names a vacuum wavelength; in an air
    window it is re-expressed in air (above the 200 nm floor) with the default air formula.
    """
    from levels.service.vocabulary import DEFAULT_AIR_FORMULA, air_wavelengths
    from levels.units import spectral_nm

    text = text_param(args, name)
    if not text:
        return None
    if re.fullmatch(r"[-+]?[0-9.]+(?:[eE][-+]?[0-9]+)?", text):
        text += "nm"
    try:
        value = spectral_nm(text)
    except UnitError as exc:
        raise BadParameter(name, f"{text!r} is not a spectral position (write 400nm, 4000A, 25000cm-1, 3.1eV or "
                                 f"750THz): {exc}") from None
    nm = value.nm
    if medium == "air" and not value.is_length:
        air = float(air_wavelengths([nm], DEFAULT_AIR_FORMULA)[0])
        nm = air if math.isfinite(air) else nm
    return nm, value.is_length


def number(args: Mapping, name: str, *, minimum: float | None = None) -> float | None:
    """A finite number (``1e6``), optionally at least ``minimum``."""
    text = text_param(args, name)
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        raise BadParameter(name, f"{text!r} is not a number") from None
    if not math.isfinite(value):
        raise BadParameter(name, f"{text!r} is not a finite number")
    if minimum is not None and value < minimum:
        raise BadParameter(name, f"{text!r} must be at least {minimum:g}")
    return value


def integer(args: Mapping, name: str, default: int, *, minimum: int, maximum: int) -> int:
    """A whole number within bounds, or ``default`` when absent."""
    text = text_param(args, name)
    if not text:
        return default
    if not _DIGITS.fullmatch(text):
        raise BadParameter(name, f"{text!r} is not a whole number")
    value = int(text)
    if not minimum <= value <= maximum:
        raise BadParameter(name, f"{value} is outside {minimum}..{maximum}")
    return value


def choice(args: Mapping, name: str, choices, default: str) -> str:
    """One of ``choices`` (case as given in ``choices``; matched case-insensitively)."""
    text = text_param(args, name)
    if not text:
        return default
    for option in choices:
        if text.lower() == option.lower():
            return option
    raise BadParameter(name, f"{text!r} is not one of {', '.join(choices)}")


def multipoles(args: Mapping, name: str = "multipole") -> tuple[str, ...] | None:
    """Multipole codes from repeated or comma-separated values (``E1,M1``)."""
    values = list_param(args, name)
    if not values:
        return None
    out = []
    for value in values:
        code = value.upper()
        if code not in MULTIPOLE_CODES:
            raise BadParameter(name, f"{value!r} is not a multipole; use {', '.join(MULTIPOLE_CODES)}")
        if code not in out:
            out.append(code)
    return tuple(out)


# ----------------------------------------------------------------- line filters

#: query parameters that select lines by label (the JSON API's and the pages' names)
LINE_SELECTION_KEYS = ("lower", "series", "line_name")


@dataclass(frozen=True)
class LineFilter:
    """Window (nm, in ``medium``), multipoles and minimum Einstein A (s-1) of a line request."""

    from_nm: float | None = None
    to_nm: float | None = None
    medium: str = DEFAULT_MEDIUM  # one default medium across front ends (levels.service.vocabulary)
    multipoles: tuple[str, ...] | None = None
    min_a: float | None = None
    order: str = "wavelength"
    #: selections by label (as ``levels lines --lower/--series/--name``): lower level, upper-level series, line name
    lower: str | None = None
    series: str | None = None
    line_name: str | None = None
    #: sum fine-structure components into multiplets (as ``levels lines --multiplets``)
    multiplets: bool = False

    @property
    def selects(self) -> bool:
        """Whether the filter selects lines by level label or line name, or sums multiplets (applied to the
        whole window)."""
        return bool(self.lower or self.series or self.line_name or self.multiplets)

    def query(self, spectrum: Spectrum | None = None, *, limit: int | None = None, offset: int = 0,
              order: str | None = None) -> LineQuery:
        """The catalog query of this filter."""
        return LineQuery(spectrum=spectrum, from_nm=self.from_nm, to_nm=self.to_nm, medium=self.medium,
                         multipoles=self.multipoles, min_a=self.min_a, order=order or self.order,
                         limit=limit, offset=offset)

    def args(self) -> dict[str, str]:
        """The filter as query-string parameters (for permalinks and download links)."""
        out: dict[str, str] = {}
        if self.from_nm is not None:
            out["from_nm"] = f"{self.from_nm:g}"
        if self.to_nm is not None:
            out["to_nm"] = f"{self.to_nm:g}"
        if self.medium != DEFAULT_MEDIUM:
            out["medium"] = self.medium
        if self.multipoles:
            out["multipole"] = ",".join(self.multipoles)
        if self.min_a is not None:
            out["min_a"] = f"{self.min_a:g}"
        if self.order != "wavelength":
            out["order"] = self.order
        for key in LINE_SELECTION_KEYS:
            if getattr(self, key):
                out[key] = getattr(self, key)
        if self.multiplets:
            out["multiplets"] = "true"
        return out


def line_filter(args: Mapping, *, strict: bool = False) -> LineFilter:
    """Read ``from_nm, to_nm`` or ``from, to``, and ``medium, multipole, min_a, order`` from a query string.

    ``strict`` (the API) takes ``from_nm``/``to_nm`` as plain numbers of nm only; pages also take units there.
    ``from``/``to`` take any spectral unit (:func:`spectral`); bounds in energy, wavenumber or frequency
    may come in either order.
    """
    medium = choice(args, "medium", ("vacuum", "air"), DEFAULT_MEDIUM)
    window: dict[str, float | None] = {}
    lengths = True
    for end in ("from", "to"):
        if text_param(args, end) and text_param(args, f"{end}_nm"):
            raise BadParameter(end, f"give either {end} or {end}_nm, not both")
        bound = spectral(args, end, medium)
        if bound is None and not strict:  # the pages' forms: any spectral unit in from_nm/to_nm too
            bound = spectral(args, f"{end}_nm", medium)
        if bound is None:
            window[end] = wavelength(args, f"{end}_nm", strict=strict)
        else:
            window[end], is_length = bound
            lengths = lengths and is_length
    lo, hi = window["from"], window["to"]
    if not lengths and lo is not None and hi is not None and lo > hi:
        window["from"], window["to"] = hi, lo
    flt = LineFilter(
        from_nm=window["from"],
        to_nm=window["to"],
        medium=medium,
        multipoles=multipoles(args),
        min_a=number(args, "min_a", minimum=0.0),
        order=LINE_ORDERS[choice(args, "order", tuple(LINE_ORDERS), "wavelength")],
        **{key: text_param(args, key) or None for key in LINE_SELECTION_KEYS},
        multiplets=choice(args, "multiplets", ("true", "false"), "false") == "true",
    )
    if flt.from_nm is not None and flt.to_nm is not None and flt.from_nm > flt.to_nm:
        raise BadParameter("to_nm", f"the window is empty: from {flt.from_nm:g} nm is above to {flt.to_nm:g} nm")
    return flt


def with_order(flt: LineFilter, order: str) -> LineFilter:
    """The same filter with another order."""
    return replace(flt, order=order)


# ----------------------------------------------------------------- level filters

@dataclass(frozen=True)
class LevelFilter:
    """Dataset, configuration substring, J and parity filters of a level table, with its sort."""

    dataset: str | None = None
    configuration: str = ""
    two_j: int | None = None
    parity: int | None = None
    sort: str = "energy"
    descending: bool = False

    def args(self) -> dict[str, str]:
        """The filter as query-string parameters."""
        out: dict[str, str] = {}
        if self.dataset:
            out["dataset"] = self.dataset
        if self.configuration:
            out["config"] = self.configuration
        if self.two_j is not None:
            out["j"] = format_j(self.two_j)
        if self.parity is not None:
            out["parity"] = "even" if self.parity == 1 else "odd"
        if self.sort != "energy":
            out["sort"] = self.sort
        if self.descending:
            out["dir"] = "desc"
        return out


def level_filter(args: Mapping) -> LevelFilter:
    """Read ``dataset, config, j, parity, sort, dir`` from a query string."""
    j_text = text_param(args, "j")
    two_j = None
    if j_text:
        try:
            two_j = parse_j(j_text)
        except NotationError as exc:
            raise BadParameter("j", str(exc)) from None
    parity_text = choice(args, "parity", ("even", "odd", "+1", "-1", "any"), "any")
    parity = {"even": 1, "+1": 1, "odd": -1, "-1": -1}.get(parity_text)
    return LevelFilter(
        dataset=text_param(args, "dataset") or None,
        configuration=text_param(args, "config"),
        two_j=two_j,
        parity=parity,
        sort=choice(args, "sort", LEVEL_SORTS, "energy"),
        descending=choice(args, "dir", ("asc", "desc"), "asc") == "desc",
    )


# ----------------------------------------------------------------- paging

@dataclass(frozen=True)
class Page:
    """A 1-based page of ``per`` rows."""

    number: int = 1
    per: int = 50

    @property
    def offset(self) -> int:
        return (self.number - 1) * self.per

    def pages(self, total: int) -> int:
        """How many pages ``total`` rows fill (at least one)."""
        return max(1, -(-total // self.per))


def page(args: Mapping, prefix: str = "", default_per: int = 50) -> Page:
    """Read ``<prefix>page`` and ``<prefix>per`` (per-page one of :data:`PER_PAGE_CHOICES`)."""
    per_text = text_param(args, f"{prefix}per")
    per = default_per
    if per_text:
        if not _DIGITS.fullmatch(per_text) or int(per_text) not in PER_PAGE_CHOICES:
            raise BadParameter(f"{prefix}per", f"{per_text!r} is not one of {', '.join(map(str, PER_PAGE_CHOICES))}")
        per = int(per_text)
    number_ = integer(args, f"{prefix}page", 1, minimum=1, maximum=MAX_OFFSET // per)
    return Page(number_, per)


def api_window(args: Mapping) -> tuple[int, int]:
    """``limit`` (1..1000, default 100) and ``offset`` (>= 0) of an API list."""
    limit = integer(args, "limit", API_DEFAULT_LIMIT, minimum=1, maximum=API_MAX_LIMIT)
    offset = integer(args, "offset", 0, minimum=0, maximum=MAX_OFFSET)
    return limit, offset
