"""Plotly figures of the site, built as plain JSON-ready dicts (the browser draws them).

One figure so far: the level diagram (a Grotrian diagram). Levels are short
horizontal bars in columns, one column per LS term (multiplicity, L, parity),
ordered by multiplicity, then L, even before odd; the energy axis is cm-1 or eV;
the ionization limit is a dashed line when known. Lines are segments from the
lower to the upper level, one colour per multipole, with width and opacity
growing with log10 A in five steps; a marker at each segment's middle carries
the hover text and the line id for a click. The module holds no physics: every
number drawn comes from the store rows it is given.
"""

from __future__ import annotations

import functools
import html
import json
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from levels.errors import NotationError
from levels.figures import unit_html
from levels.notation import display_label, l_letter, parse_jk_term, parse_term
from levels.units import CM1_EV

#: colour of each multipole's lines (our own palette)
MULTIPOLE_COLOURS = {
    "E1": "#1f6f78", "M1": "#b4532a", "E2": "#6a4c93", "M2": "#8c7a1f", "E3": "#2f5d9e", "2E1": "#6b6b6b",
    "": "#6b6b6b",
}
NO_A_COLOUR = "#9a9a9a"
LEVEL_COLOUR = "#2b2b2b"
LIMIT_COLOUR = "#a33b3b"
PAPER = "#fbfaf6"
#: steps of line width (px) and opacity by log10 A, weakest to strongest
A_STEPS = 5
WIDTHS = np.linspace(0.6, 3.2, A_STEPS)
OPACITIES = np.linspace(0.22, 0.95, A_STEPS)
BAR_HALF_WIDTH = 0.36


#: first element of the column key of jK-coupled terms (after every LS term) and of unknown terms (last)
JK_COLUMNS = 10**5
OTHER_COLUMNS = 10**6
#: energy axes of the diagram: linear; log10 of the distance below the ionization limit (the crowded top
#: spread out, the ground state low); linear with the largest empty energy gap cut out (a broken axis)
DIAGRAM_AXES = ("linear", "limit", "broken")
#: a gap is cut out of a broken axis when it spans more than this share of the energy range
BREAK_MIN_SHARE = 0.25
#: height of the cut, as a share of the drawn energy range
BREAK_SHOWN_SHARE = 0.06


@functools.lru_cache(maxsize=4096)
def term_key(term: str, parity: int) -> tuple:
    """Sort key and identity of a level's column: (multiplicity, L, parity) of an LS term; jK-coupled terms
    (``2[5/2]``) after them, grouped by parity, then K (numerically), then 2s+1; unknown terms last."""
    odd = 0 if parity == 1 else 1
    try:
        parsed = parse_term(term) if term else None
    except NotationError:
        parsed = None
    if parsed is not None and hasattr(parsed, "L"):
        return (parsed.multiplicity, parsed.L, 0 if parsed.parity == 1 else 1, "")
    try:
        jk = parse_jk_term(term) if term else None
    except NotationError:
        jk = None
    if jk is not None:
        return (JK_COLUMNS, odd, jk.two_k, str(jk.multiplicity))
    return (OTHER_COLUMNS, OTHER_COLUMNS, odd, term or "")


def column_key(level: Mapping[str, Any]) -> tuple:
    """The column key (:func:`term_key`) of a level row: from its LS values (``multiplicity``, ``L``,
    ``parity`` of a :class:`levels.service.contract.LevelRow`) when it has them; only a jK-coupled or unknown
    term (the store keeps no K) is read from the term text."""
    multiplicity, big_l = level.get("multiplicity"), level.get("L")
    if multiplicity is not None and big_l is not None:
        return (multiplicity, big_l, 0 if level["parity"] == 1 else 1, "")
    return term_key(level["term"], level["parity"])


def term_tick(key: tuple) -> str:
    """Axis label of a column: ``<sup>2</sup>P°``, ``<sup>2</sup>[5/2]°`` (plotly's subset of HTML)."""
    first, second, third, raw = key
    if first == JK_COLUMNS:
        two_k = third
        k_text = f"{two_k // 2}" if two_k % 2 == 0 else f"{two_k}/2"
        return f"<sup>{html.escape(raw)}</sup>[{k_text}]{'°' if second else ''}"
    if first == OTHER_COLUMNS:
        text = html.escape(raw.rstrip("°o*")) if raw else "no LS term"
        return f"{text}{'°' if third else ''}"
    return f"<sup>{first}</sup>{html.escape(l_letter(second, upper=True))}{'°' if third else ''}"


def energy_axis(energy_cm1: np.ndarray, axis: str, *, limit_cm1: float | None = None,
                scale: float = 1.0) -> tuple[np.ndarray, dict]:
    """Plot coordinate of each level energy on the chosen axis, and the axis settings.

    Parameters
    ----------
    energy_cm1 : numpy.ndarray
        Level energies, cm-1.
    axis : {"linear", "limit", "broken"}
        ``limit``: log10 of (limit - E) in the unit, on a reversed log axis (levels at or above the limit get
        NaN: not drawn); ``broken``: the largest gap between consecutive levels, when it spans more than
        :data:`BREAK_MIN_SHARE` of the range, shrunk to :data:`BREAK_SHOWN_SHARE` of the drawn range, with
        ticks in true energies.
    limit_cm1 : float, optional
        Ionization limit (needed by ``limit``; without it the axis falls back to linear).
    scale : float
        Unit per cm-1 (1, or eV per cm-1).

    Returns
    -------
    (y, info)
        ``info`` has ``axis`` (the axis used), ``note`` (a sentence or ""), and for ``broken`` the cut
        ``break`` = (low, high) in the unit and ``ticks`` (values, texts); for ``limit`` ``limit`` in the unit.

    Examples
    --------
    >>> y, info = energy_axis(np.array([0.0, 100.0, 101.0, 102.0]), "broken")
    >>> info["axis"], info["break"], float(y[1] - y[0]) < 100
    ('broken', (0.0, 100.0), True)
    """
    e = np.asarray(energy_cm1, dtype=float) * scale
    if axis == "limit":
        if limit_cm1 is None or not np.isfinite(limit_cm1):
            y, info = energy_axis(energy_cm1, "linear", scale=scale)
            info["note"] = "no ionization limit known: linear axis"
            return y, info
        limit = limit_cm1 * scale
        distance = limit - e
        return np.where(distance > 0, distance, np.nan), {"axis": "limit", "note": "", "limit": limit}
    if axis == "broken" and len(e) > 2:
        order = np.sort(e[np.isfinite(e)])
        gaps = np.diff(order)
        span = order[-1] - order[0] if len(order) else 0.0
        k = int(np.argmax(gaps)) if len(gaps) else 0
        if span > 0 and gaps[k] > BREAK_MIN_SHARE * span:
            low, high = float(order[k]), float(order[k + 1])
            kept = span - (high - low)
            shown = BREAK_SHOWN_SHARE * kept / (1 - BREAK_SHOWN_SHARE)
            y = np.where(e > low, e - (high - low) + shown, e)
            return y, {"axis": "broken", "note": "", "break": (low, high), "shift": (high - low) - shown}
        return e, {"axis": "linear", "note": "no large empty gap between levels: linear axis"}
    return e, {"axis": "linear", "note": ""}


def _nan_to_none(values: np.ndarray, digits: int) -> list:
    rounded = np.round(values.astype(float), digits)
    return [None if v != v else v for v in rounded.tolist()]


def _segments(x0: np.ndarray, x1: np.ndarray, y0: np.ndarray, y1: np.ndarray, digits: int) -> tuple[list, list]:
    """x and y lists of many separate segments (NaN gaps between them)."""
    n = len(x0)
    xs = np.full(3 * n, np.nan)
    ys = np.full(3 * n, np.nan)
    xs[0::3], xs[1::3] = x0, x1
    ys[0::3], ys[1::3] = y0, y1
    return _nan_to_none(xs, 3), _nan_to_none(ys, digits)


def _fmt(value, spec: str) -> str:
    return "–" if value is None or (isinstance(value, float) and not math.isfinite(value)) else format(value, spec)


@dataclass(frozen=True)
class LevelLayer:
    """The level part of a diagram, built once per species, store revision and unit.

    Attributes
    ----------
    unit : str
        ``"cm-1"`` or ``"eV"``.
    keys : list of tuple
        Column keys (:func:`column_key`), in column order.
    level_x, level_e : numpy.ndarray
        Column and energy (cm-1) of each level.
    index_of : dict
        Level label -> row (lines are placed by their levels' labels).
    traces : list of dict
        The plotly traces of the level bars and their hover markers.
    traces_json : str
        ``traces`` serialised (strict JSON), for splicing into a response without re-encoding.
    top : float
        The highest level energy, cm-1 (0 without levels).
    level_y : numpy.ndarray
        Plot coordinate of each level on the energy axis (:func:`energy_axis`; NaN: not drawn).
    axis : dict
        The energy axis used (``info`` of :func:`energy_axis`).
    """

    unit: str
    keys: list
    level_x: np.ndarray
    level_e: np.ndarray
    index_of: dict
    traces: list
    traces_json: str
    top: float
    level_y: np.ndarray | None = None
    axis: dict | None = None

    @property
    def count(self) -> int:
        return len(self.level_e)


def _scale(unit: str) -> tuple[float, int]:
    return (CM1_EV, 7) if unit == "eV" else (1.0, 4)


def level_layer(levels: Sequence[Mapping[str, Any]], unit: str = "cm-1", axis: str = "linear",
                limit_cm1: float | None = None) -> LevelLayer:
    """Build the level bars of a diagram (see :func:`grotrian_figure` for ``levels``) on the energy ``axis``
    (:data:`DIAGRAM_AXES`; ``limit_cm1`` the ionization limit for ``"limit"``). Only term columns that hold a
    level exist, so no column is empty."""
    scale, digits = _scale(unit)
    level_keys = [column_key(lv) for lv in levels]
    keys = sorted(set(level_keys))
    column_of = {key: i for i, key in enumerate(keys)}
    level_x = np.array([column_of[key] for key in level_keys], dtype=float)
    level_e = np.array([lv["energy_cm1"] for lv in levels], dtype=float)
    level_y, axis_info = energy_axis(level_e, axis, limit_cm1=limit_cm1, scale=scale)
    traces: list[dict] = []
    if len(levels):
        xs, ys = _segments(level_x - BAR_HALF_WIDTH, level_x + BAR_HALF_WIDTH, level_y, level_y, digits)
        traces.append({"type": "scatter", "mode": "lines", "x": xs, "y": ys, "hoverinfo": "skip",
                       "line": {"color": LEVEL_COLOUR, "width": 1.6}, "name": "levels", "showlegend": False})
        hover = [
            f"<b>{html.escape(display_label(lv['label'], superscripts=True))}</b>"
            f"<br>E = {_fmt(lv['energy_cm1'], '.4f')} cm⁻¹"
            f" ({_fmt(lv['energy_cm1'] * CM1_EV, '.6f')} eV)<br>J = {html.escape(lv['j'])}, g = {lv['g']}"
            f"<br>{html.escape(lv['dataset'])}"
            for lv in levels
        ]
        traces.append({"type": "scatter", "mode": "markers", "x": _nan_to_none(level_x, 3),
                       "y": _nan_to_none(level_y, digits), "hovertext": hover, "hoverinfo": "text",
                       "marker": {"symbol": "line-ew", "size": 22, "opacity": 0,
                                  "line": {"width": 0, "color": LEVEL_COLOUR}},
                       "name": "level", "showlegend": False, "meta": "levels"})
    return LevelLayer(unit=unit, keys=keys, level_x=level_x, level_e=level_e,
                      index_of={lv["label"]: i for i, lv in enumerate(levels)}, traces=traces,
                      traces_json=_dumps(traces)[1:-1], top=float(level_e.max()) if len(levels) else 0.0,
                      level_y=level_y, axis=axis_info)


@dataclass(frozen=True)
class LineArrays:
    """Lines of one species as columns (what the diagram draws of them).

    ``id`` (object: int or None), ``lower`` and ``upper`` (level labels), ``multipole`` (object);
    ``vacuum_nm``, ``air_nm`` (nm), ``wavenumber_cm1`` (cm-1), ``a_per_s`` (s-1) as floats, NaN
    where unknown.
    """

    id: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    multipole: np.ndarray
    vacuum_nm: np.ndarray
    air_nm: np.ndarray
    wavenumber_cm1: np.ndarray
    a_per_s: np.ndarray

    def __len__(self) -> int:
        return len(self.vacuum_nm)

    @classmethod
    def from_columns(cls, columns: dict, index: np.ndarray | None = None) -> LineArrays:
        """From a mapping of column arrays (``index`` picks rows)."""
        pick = (lambda a: a) if index is None else (lambda a: a[index])
        ids = pick(np.asarray(columns["id"]))
        return cls(id=ids.astype(object), lower=pick(columns["lower"]), upper=pick(columns["upper"]),
                   multipole=pick(columns["multipole"]), vacuum_nm=pick(columns["vacuum_nm"]).astype(float),
                   air_nm=pick(columns["air_nm"]).astype(float),
                   wavenumber_cm1=pick(columns["wavenumber_cm1"]).astype(float),
                   a_per_s=pick(columns["a_per_s"]).astype(float))

    @classmethod
    def from_rows(cls, rows: Sequence[Mapping[str, Any]]) -> LineArrays:
        """From line rows (``LINE_COLUMNS`` plus ``id``; None for unknown numbers)."""
        def objects(name: str, default=None) -> np.ndarray:
            out = np.empty(len(rows), dtype=object)
            out[:] = [row.get(name, default) for row in rows]
            return out

        def floats(name: str) -> np.ndarray:
            return np.array([np.nan if row.get(name) is None else row[name] for row in rows], dtype=float)

        return cls(id=objects("id"), lower=objects("lower"), upper=objects("upper"), multipole=objects("multipole"),
                   vacuum_nm=floats("vacuum_nm"), air_nm=floats("air_nm"), wavenumber_cm1=floats("wavenumber_cm1"),
                   a_per_s=floats("a_per_s"))


def line_hover(lines: LineArrays, medium: str, spectrum: str | None = None) -> list[str]:
    """Hover text of each line: its levels, wavelength (``medium`` first), wavenumber, A and multipole;
    with ``spectrum``, a hydrogen line's customary name (Hα, Lyβ) first."""
    from levels.service.line_selection import hydrogen_names

    air = medium == "air"
    out = []
    names = (hydrogen_names(spectrum, lines.lower.tolist(), lines.upper.tolist()) if spectrum
             else [None] * len(lines.lower))
    for lower, upper, vac, air_nm, sigma, a, code, name in zip(
            lines.lower.tolist(), lines.upper.tolist(), lines.vacuum_nm.tolist(), lines.air_nm.tolist(),
            lines.wavenumber_cm1.tolist(), lines.a_per_s.tolist(), lines.multipole.tolist(), names):
        has_air = air_nm == air_nm
        if air and has_air:
            where = f"air {air_nm:.5f} nm (vacuum {vac:.5f} nm)"
        elif air:
            where = f"vacuum {_fmt(vac, '.5f')} nm"
        else:
            where = f"vacuum {_fmt(vac, '.5f')} nm" + (f" (air {air_nm:.5f} nm)" if has_air else "")
        title = f"{html.escape(name)}: " if name else ""
        out.append(f"<b>{title}{html.escape(display_label(str(lower), superscripts=True))} – "
                   f"{html.escape(display_label(str(upper), superscripts=True))}</b><br>λ {where}"
                   f"<br>σ = {_fmt(sigma, '.4f')} cm⁻¹<br>A = {_fmt(a, '.3e')} s⁻¹ · {html.escape(code or '?')}")
    return out


def level_rows_of(layer: LevelLayer, labels: np.ndarray) -> np.ndarray:
    """Row of each label among the layer's levels (-1 where the label is not drawn)."""
    return np.fromiter((layer.index_of.get(label, -1) for label in labels.tolist()), dtype=np.int64,
                       count=len(labels))


def line_traces(layer: LevelLayer, lines: LineArrays, *, medium: str = "vacuum",
                hover: np.ndarray | None = None) -> tuple[list[dict], int]:
    """The line segments (grouped by multipole and A step) and the hover markers; also the unplaced count.

    ``hover`` (optional) holds each line's hover text already (:func:`line_hover`, same medium).
    """
    traces, unplaced, _placed = _line_traces(layer, lines, medium=medium, hover=hover)
    return traces, unplaced


def _line_traces(layer: LevelLayer, lines: LineArrays, *, medium: str, hover: np.ndarray | None = None,
                 level_index: tuple[np.ndarray, np.ndarray] | None = None,
                 with_hover: bool = True) -> tuple[list[dict], int, np.ndarray]:
    """:func:`line_traces`, also given the lines' level rows (``level_index``) and giving the placed mask;
    without ``with_hover`` the markers trace has no ``hovertext`` (the caller splices it in)."""
    scale, digits = _scale(layer.unit)
    if level_index is None:
        lower_i, upper_i = level_rows_of(layer, lines.lower), level_rows_of(layer, lines.upper)
    else:
        lower_i, upper_i = level_index
    placed = (lower_i >= 0) & (upper_i >= 0)
    unplaced = int(len(lines) - placed.sum())
    if not placed.any():
        return [], unplaced, placed
    lower_i, upper_i = lower_i[placed], upper_i[placed]
    lx, ux = layer.level_x[lower_i], layer.level_x[upper_i]
    same = lx == ux
    direction = np.sign(ux - lx)
    x0 = np.where(same, lx - 0.18, lx + 0.22 * direction)
    x1 = np.where(same, ux + 0.18, ux - 0.22 * direction)
    level_y = layer.level_y if layer.level_y is not None else layer.level_e * scale
    y0, y1 = level_y[lower_i], level_y[upper_i]
    a = lines.a_per_s[placed]
    log_a = np.where(a > 0, np.log10(np.where(a > 0, a, 1.0)), np.nan)
    has_a = np.isfinite(log_a)
    count = len(a)
    step = np.full(count, -1)
    if has_a.any():
        lo, hi = np.nanmin(log_a), np.nanmax(log_a)
        frac = np.ones(count) if hi == lo else (log_a - lo) / (hi - lo)
        step = np.where(has_a, np.clip((np.nan_to_num(frac) * A_STEPS).astype(int), 0, A_STEPS - 1), -1)
    codes = np.array(["" if m is None else str(m) for m in lines.multipole[placed].tolist()], dtype=object)
    present = set(codes.tolist())
    traces: list[dict] = []
    legend_done: set[str] = set()
    for code in [c for c in MULTIPOLE_COLOURS if c in present]:
        of_code = codes == code
        for k in range(A_STEPS - 1, -2, -1):
            mask = of_code & (step == k)
            if not mask.any():
                continue
            xs, ys = _segments(x0[mask], x1[mask], y0[mask], y1[mask], digits)
            colour = MULTIPOLE_COLOURS[code] if k >= 0 else NO_A_COLOUR
            line_style: dict = {"color": colour, "width": float(WIDTHS[k]) if k >= 0 else 0.8}
            if k < 0:
                line_style["dash"] = "dot"
            traces.append({"type": "scatter", "mode": "lines", "x": xs, "y": ys, "hoverinfo": "skip",
                           "line": line_style, "opacity": float(OPACITIES[k]) if k >= 0 else 0.6,
                           "name": code or "other", "legendgroup": code or "other",
                           "showlegend": code not in legend_done})
            legend_done.add(code)
    shown = LineArrays(id=lines.id[placed], lower=lines.lower[placed], upper=lines.upper[placed],
                       multipole=lines.multipole[placed], vacuum_nm=lines.vacuum_nm[placed],
                       air_nm=lines.air_nm[placed], wavenumber_cm1=lines.wavenumber_cm1[placed], a_per_s=a)
    colours = [MULTIPOLE_COLOURS.get(code, NO_A_COLOUR) for code in codes.tolist()]
    vacuum = [None if v != v else v for v in shown.vacuum_nm.tolist()]
    markers = {"type": "scatter", "mode": "markers", "x": _nan_to_none((x0 + x1) / 2, 3),
               "y": _nan_to_none((y0 + y1) / 2, digits), "hoverinfo": "text",
               "customdata": [list(pair) for pair in zip(shown.id.tolist(), vacuum)],
               "marker": {"size": 7, "color": colours, "opacity": 0.55, "symbol": "diamond"},
               "name": "line", "showlegend": False, "meta": "lines"}
    if with_hover:
        markers["hovertext"] = line_hover(shown, medium) if hover is None else hover[placed].tolist()
    traces.append(markers)
    return traces, unplaced, placed


def diagram_layout(layer: LevelLayer, *, ionization_cm1: float | None = None, title: str = "") -> dict:
    """The layout of a diagram: term columns, energy axis, the ionization limit when known."""
    scale, digits = _scale(layer.unit)
    unit_text = "eV" if layer.unit == "eV" else "cm⁻¹"
    shapes, annotations = [], []
    axis = layer.axis or {"axis": "linear", "note": ""}
    if ionization_cm1 is not None and axis["axis"] != "limit":
        y = ionization_cm1 * scale
        if axis["axis"] == "broken" and y > axis["break"][0]:
            y -= axis["shift"]
        y = round(y, digits)
        shapes.append({"type": "line", "xref": "paper", "x0": 0, "x1": 1, "yref": "y", "y0": y, "y1": y,
                       "line": {"color": LIMIT_COLOUR, "width": 1.4, "dash": "dash"}})
        annotations.append({"xref": "paper", "x": 1, "xanchor": "right", "yref": "y", "y": y, "yanchor": "bottom",
                            "showarrow": False, "font": {"color": LIMIT_COLOUR, "size": 12},
                            "text": f"ionization limit {_fmt(ionization_cm1 * scale, '.6g')} {unit_text}"})
    top = max([layer.top] + ([ionization_cm1] if ionization_cm1 else []))
    yaxis: dict[str, Any] = {"title": {"text": f"energy [{unit_text}]"}, "zeroline": False, "gridcolor": "#e6e2d8",
                             "range": [-0.03 * top * scale, 1.06 * top * scale] if top > 0 else None}
    if axis["axis"] == "broken":
        low, high = axis["break"]
        shift = axis["shift"]
        top_y = top * scale - shift
        yaxis["range"] = [-0.03 * top_y, 1.06 * top_y]
        below = np.linspace(0, low, 4) if low > 0 else np.array([0.0])
        above = np.linspace(high, top * scale, 5)
        values = np.concatenate([below, above])
        yaxis["tickmode"] = "array"
        yaxis["tickvals"] = [round(float(v - (shift if v > low else 0)), digits) for v in values]
        yaxis["ticktext"] = [format(float(v), ".6g") for v in values]
        yaxis["title"]["text"] = f"energy [{unit_text}], axis broken between {low:.6g} and {high:.6g}"
        shown = high - shift - low  # the cut's height on the drawn axis
        shapes.append({"type": "rect", "xref": "paper", "x0": 0, "x1": 1, "yref": "y",
                       "y0": round(low + 0.25 * shown, digits), "y1": round(low + 0.75 * shown, digits),
                       "fillcolor": "#e6e2d8", "opacity": 0.7, "line": {"width": 0}, "layer": "below"})
        annotations.append({"xref": "paper", "x": 0.01, "xanchor": "left", "yref": "y",
                            "y": round(low + 0.5 * shown, digits), "showarrow": False, "font": {"size": 11},
                            "text": f"≈ axis broken: {low:.6g}–{high:.6g} {unit_text} left out"})
    elif axis["axis"] == "limit":
        yaxis = {"title": {"text": f"distance below the ionization limit [{unit_text}] (log)"}, "type": "log",
                 "autorange": "reversed", "zeroline": False, "gridcolor": "#e6e2d8", "exponentformat": "power"}
    layout: dict[str, Any] = {
        "paper_bgcolor": PAPER, "plot_bgcolor": PAPER,
        "font": {"family": "DejaVu Sans, Verdana, sans-serif", "size": 12, "color": "#222"},
        "margin": {"l": 70, "r": 20, "t": 24, "b": 60},
        "hovermode": "closest", "dragmode": "zoom",
        "xaxis": {"tickmode": "array", "tickvals": list(range(len(layer.keys))),
                  "ticktext": [term_tick(k) for k in layer.keys], "range": [-0.7, max(len(layer.keys), 1) - 0.3],
                  "showgrid": False, "zeroline": False, "title": {"text": "term (2S+1, L, parity)"},
                  "fixedrange": False},
        "yaxis": yaxis,
        "legend": {"title": {"text": "multipole"}, "orientation": "h", "y": -0.14, "x": 0},
        "shapes": shapes, "annotations": annotations, "meta": {"title": title},
    }
    if layout["yaxis"].get("range", 0) is None:
        del layout["yaxis"]["range"]
    return layout


def _dumps(value) -> str:
    return json.dumps(value, ensure_ascii=False, allow_nan=False, separators=(",", ":"))


def diagram_json(layer: LevelLayer, lines: LineArrays, *, medium: str = "vacuum", ionization_cm1: float | None = None,
                 title: str = "", hover: np.ndarray | None = None, hover_json: np.ndarray | None = None,
                 level_index: tuple[np.ndarray, np.ndarray] | None = None) -> tuple[str, int]:
    """The diagram figure as JSON text (the level traces spliced in as serialised once), and the unplaced count.

    ``hover_json`` (optional): each line's hover text already JSON-encoded (``json.dumps`` of
    :func:`line_hover`), spliced in as it is; ``level_index``: the lines' level rows (:func:`level_rows_of`).
    """
    rest, unplaced = diagram_json_rest(layer, lines, medium=medium, ionization_cm1=ionization_cm1, title=title,
                                       hover=hover, hover_json=hover_json, level_index=level_index)
    return diagram_json_start(layer) + rest, unplaced


def diagram_json_start(layer: LevelLayer) -> str:
    """The start of a diagram's JSON text, the same for every filter: ``{"data":[`` and the level traces."""
    return '{"data":[' + layer.traces_json


def diagram_json_rest(layer: LevelLayer, lines: LineArrays, *, medium: str = "vacuum",
                      ionization_cm1: float | None = None, title: str = "", hover: np.ndarray | None = None,
                      hover_json: np.ndarray | None = None,
                      level_index: tuple[np.ndarray, np.ndarray] | None = None) -> tuple[str, int]:
    """The rest of a diagram's JSON text after :func:`diagram_json_start` (the line traces and the layout),
    and the unplaced count (parameters as :func:`diagram_json`)."""
    traces, unplaced, placed = _line_traces(layer, lines, medium=medium, hover=hover, level_index=level_index,
                                            with_hover=hover_json is None)
    text = ""
    if traces:
        text = _dumps(traces)[1:-1]
        if hover_json is not None:  # the markers trace is the last one: its hover texts go in before its brace
            text = text[:-1] + ',"hovertext":[' + ",".join(hover_json[placed].tolist()) + "]}"
        if layer.traces:
            text = "," + text
    layout = diagram_layout(layer, ionization_cm1=ionization_cm1, title=title)
    return text + '],"layout":' + _dumps(layout) + "}", unplaced


def grotrian_figure(levels: Sequence[dict], lines: Sequence[dict] | LineArrays, *, unit: str = "cm-1",
                    ionization_cm1: float | None = None, medium: str = "vacuum", title: str = "") -> dict:
    """The level diagram as a plotly figure dict, with what could not be placed.

    Parameters
    ----------
    levels : sequence of dict
        Level rows (``LEVEL_COLUMNS``): label, term, parity, energy_cm1 (cm-1), dataset ...
    lines : sequence of dict or LineArrays
        Line rows of the same species (``LINE_COLUMNS`` plus ``id``); energies in cm-1,
        wavelengths in nm, ``a_per_s`` in s-1.
    unit : {"cm-1", "eV"}
        Energy axis unit.
    ionization_cm1 : float, optional
        Ionization limit, cm-1, drawn as a dashed line.
    title : str
        Accessible name of the figure (kept in the layout's ``meta``; the page has its own heading).
    medium : {"vacuum", "air"}
        Which wavelength the hover text quotes first.

    Returns
    -------
    dict
        ``{"figure": {"data": [...], "layout": {...}}, "columns": int, "unplaced": int}``;
        ``unplaced`` counts lines whose levels are not among ``levels``.
    """
    layer = level_layer(levels, unit)
    arrays = lines if isinstance(lines, LineArrays) else LineArrays.from_rows(lines)
    traces, unplaced = line_traces(layer, arrays, medium=medium)
    figure = {"data": layer.traces + traces, "layout": diagram_layout(layer, ionization_cm1=ionization_cm1,
                                                                        title=title)}
    return {"figure": figure, "columns": len(layer.keys), "unplaced": unplaced}


# ----------------------------------------------------------------- emission spectrum

SPECTRUM_COLOUR = "#1f6f78"
MARK_COLOUR = "#c9822b"
#: the most lines marked by a stick and a hover label
MARKED_LINES = 40


#: points of the drawn spectrum at most; a finer grid is drawn as its min-max envelope (every peak kept)
DISPLAY_POINTS = 20_000


def envelope(x: np.ndarray, y: np.ndarray, max_points: int) -> tuple[np.ndarray, np.ndarray]:
    """At most ``max_points`` samples of (x, y) that keep each bucket's minimum and maximum, in order, so the
    drawn curve has the same peaks and troughs as the full grid (a display reduction, not a resampling).

    >>> x = np.arange(10.0); y = np.array([0, 5, 0, 0, 0, 0, 0, 9, 0, 0.0])
    >>> ex, ey = envelope(x, y, 6)
    >>> float(ey.max()), 5.0 in ey.tolist(), len(ex) <= 6
    (9.0, True, True)
    """
    n = len(x)
    if n <= max_points or max_points < 4:
        return x, y
    buckets = (max_points - 2) // 2  # two samples per bucket, and both ends
    size = -(-n // buckets)
    padded = np.full(buckets * size, np.nan)
    padded[:n] = y
    blocks = padded.reshape(buckets, size)
    filled = ~np.all(np.isnan(blocks), axis=1)
    base = np.arange(buckets) * size
    lo = base + np.nanargmin(np.where(np.isnan(blocks), np.inf, blocks), axis=1)
    hi = base + np.nanargmax(np.where(np.isnan(blocks), -np.inf, blocks), axis=1)
    keep = np.unique(np.concatenate([lo[filled], hi[filled], [0, n - 1]]))
    keep = keep[keep < n]
    return x[keep], y[keep]


def emission_figure(grid_nm: np.ndarray, density: np.ndarray, lines: Sequence[dict], *, medium: str = "air",
                    title: str = "", max_marked: int = MARKED_LINES, quantity: str = "emission coefficient",
                    unit: str = "W m-3 sr-1 nm-1") -> dict:
    """The synthetic spectrum of the emission workbench as a plotly figure dict.

    Parameters
    ----------
    grid_nm : array
        Wavelength grid, nm (in ``medium``).
    density : array
        The spectrum on the grid: ``quantity`` in ``unit`` (emission coefficient, W m-3 sr-1 nm-1, when
        optically thin; spectral radiance, W m-2 sr-1 nm-1, through a path length).
    lines : sequence of dict
        Emission rows (``rel_intensity``, ``air_nm``, ``vacuum_nm``, ``a_per_s``, ``lower``, ``upper``),
        strongest first or in any order.
    medium : {"air", "vacuum"}
        Which wavelength the axis and the sticks use (vacuum where a line has no air wavelength).
    title : str
        Accessible name (kept in the layout's ``meta``; the page has its own heading).
    max_marked : int
        The strongest lines marked by a stick whose hover text names the line.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}``. Text from the store is HTML-escaped.
    """
    grid, dens = envelope(np.asarray(grid_nm, dtype=float), np.asarray(density, dtype=float), DISPLAY_POINTS)
    peak = float(np.nanmax(dens)) if dens.size else 1.0
    peak = peak if peak > 0 and math.isfinite(peak) else 1.0
    marked = sorted(lines, key=lambda r: -r["rel_intensity"])[:max_marked]
    xs: list = []
    ys: list = []
    hover: list = []
    for row in marked:
        in_air = medium == "air" and row.get("air_nm") is not None
        x = row["air_nm"] if in_air else row["vacuum_nm"]
        xs.extend([round(float(x), 6), round(float(x), 6), None])
        ys.extend([0.0, peak * float(row["rel_intensity"]), None])
        label = (f"<b>{html.escape(str(row['lower']))} – {html.escape(str(row['upper']))}</b>"
                 f"<br>λ {'air' if in_air else 'vacuum'} {_fmt(x, '.4f')} nm"
                 f"<br>rel. intensity {_fmt(row['rel_intensity'], '.3g')}"
                 f"<br>A = {_fmt(row.get('a_per_s'), '.3e')} s⁻¹")
        hover.extend([label, label, None])
    data = [
        {"type": "scatter", "mode": "lines", "x": _nan_to_none(grid, 6),
         "y": [None if v != v else float(v) for v in dens],
         "name": "synthetic spectrum", "line": {"color": SPECTRUM_COLOUR, "width": 1.3}, "hoverinfo": "x+y",
         "meta": "spectrum"},
        {"type": "scatter", "mode": "lines", "x": xs, "y": ys,
         "name": f"strongest {len(marked)} lines (height = rel. intensity)",
         "hovertext": hover, "hoverinfo": "text", "line": {"color": MARK_COLOUR, "width": 1, "dash": "dot"},
         "meta": "lines"},
    ]
    layout = {
        "paper_bgcolor": PAPER, "plot_bgcolor": PAPER,
        "font": {"family": "DejaVu Sans, Verdana, sans-serif", "size": 12, "color": "#222"},
        "margin": {"l": 80, "r": 20, "t": 20, "b": 60}, "hovermode": "closest",
        "xaxis": {"title": {"text": f"wavelength in {'air' if medium == 'air' else 'vacuum'} [nm]"},
                  "gridcolor": "#e6e2d8", "zeroline": False},
        "yaxis": {"title": {"text": f"{quantity} [{unit_html(unit)}]"}, "gridcolor": "#e6e2d8",
                  "rangemode": "tozero", "exponentformat": "power"},
        "legend": {"orientation": "h", "y": -0.18, "x": 0},
        "meta": {"title": title},
    }
    return {"data": data, "layout": layout}
