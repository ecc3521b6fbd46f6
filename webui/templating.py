"""Jinja helpers: number formatting, query-string permalinks, site facts.

Autoescaping stays on for every template (Flask's default for ``.html``);
nothing here marks text as safe.
"""

from __future__ import annotations

import math
from urllib.parse import urlencode

from flask import Flask, request

from levels import __version__
from levels.service.contract import MULTIPOLE_CODES


def fixed(value, digits: int = 4) -> str:
    """A number with ``digits`` decimals (empty for missing)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    return f"{value:.{digits}f}"


def sci(value, digits: int = 3) -> str:
    """A number in scientific notation with ``digits`` decimals (empty for missing)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    return f"{value:.{digits}e}"


def sig(value, digits: int = 6) -> str:
    """A number with ``digits`` significant digits (empty for missing)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    return f"{value:.{digits}g}"


def plain(value) -> str:
    """A number as stored, shortest exact form (empty for missing)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return ""
    return repr(value) if isinstance(value, float) else str(value)


def num(value, unc=None) -> str:
    """A number under the display policy of :mod:`levels.io.display` (rounded to its uncertainty when given)."""
    from levels.io.display import format_number

    return format_number(value, unc)


def pm(value, unc=None, unit: str = "") -> str:
    """``value ± unc unit`` under the display policy (no ``±`` when the uncertainty is unknown)."""
    from levels.io.display import format_with_uncertainty

    return format_with_uncertainty(value, unc, unit)


def unc(value) -> str:
    """An uncertainty with two significant digits."""
    from levels.io.display import format_uncertainty

    return format_uncertainty(value)


#: the numeric columns of the web line tables, formatted column by column under the display policy
LINE_DISPLAY_COLUMNS = ("vacuum_nm", "air_nm", "obs_nm", "ritz_nm", "obs_minus_ritz_nm", "wavenumber_cm1",
                        "lower_cm1", "upper_cm1", "a_per_s", "f_abs", "line_strength_au", "unc_nm")


def display_rows(rows, columns=LINE_DISPLAY_COLUMNS) -> list[dict]:
    """Text of each row's numeric ``columns`` under the display policy, decided per column (one dict per row)."""
    from collections.abc import Mapping

    from levels.io.display import format_rows

    plain_rows = [r if isinstance(r, Mapping) else {c: getattr(r, c, None) for c in columns} for r in rows]
    return [dict(zip(columns, cells)) for cells in format_rows(plain_rows, list(columns))]


def configuration(value) -> str:
    """A configuration with spaces between subshells and superscript occupancies (display only)."""
    from levels.notation import display_configuration

    return display_configuration(value, superscripts=True)


def level_label(value) -> str:
    """A level label with its configuration spaced and superscript occupancies (display only; the stored
    label, links and downloads keep the dotted form)."""
    from levels.notation import display_label

    return display_label(value, superscripts=True)


def parity_word(value) -> str:
    return {1: "even", -1: "odd"}.get(value, "")


def with_query(**changes) -> str:
    """The current URL with some query parameters changed (None removes one)."""
    args = request.args.to_dict(flat=False)
    for key, value in changes.items():
        if value is None or value == "":
            args.pop(key, None)
        else:
            args[key] = [str(value)]
    query = urlencode(args, doseq=True)
    return request.path + (f"?{query}" if query else "")


def query_string(mapping: dict) -> str:
    """``?a=1&b=2`` of a mapping (empty when it is empty)."""
    query = urlencode({k: v for k, v in mapping.items() if v not in (None, "")}, doseq=True)
    return f"?{query}" if query else ""


def init_app(app: Flask) -> None:
    """Register the helpers on ``app``'s Jinja environment."""
    app.jinja_env.filters.update(fixed=fixed, sci=sci, sig=sig, plain=plain, parity_word=parity_word, num=num, pm=pm,
                                 unc=unc, configuration=configuration, level_label=level_label)
    app.jinja_env.globals.update(display_rows=display_rows,
                                 with_query=with_query, query_string=query_string, tool_version=__version__,
                                 all_multipoles=MULTIPOLE_CODES)
    app.jinja_env.autoescape = True
    app.jinja_env.trim_blocks = True
    app.jinja_env.lstrip_blocks = True

    @app.context_processor
    def _site():
        catalog = app.extensions["levels"]["catalog"]
        return {"store_url": catalog.display_url,
                "api_writes": bool(app.config.get("LEVELS_API_TOKEN"))}
