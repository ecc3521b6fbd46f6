"""Plotly figures (the one module that builds them; the CLI and the web site both call it).

Figures are returned as plain dicts (``{"data": [...], "layout": {...}}``) so
the web site can send them as JSON and the CLI can write them into a
self-contained HTML file with the plotly bundle inlined (works offline).
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence

import numpy as np

from levels.notation import display_label, hydrogen_line_name, principal_number

#: our palette (invented for this project): ink, slate, and an accent per multipole
INK = "#1d2633"
GRID = "#d8dee6"
ACCENT = {"E1": "#c2410c", "M1": "#0f766e", "E2": "#6d28d9"}
SPECTRUM_LINE = "#0b4f8a"


def unit_html(unit: str) -> str:
    """'W m-3 sr-1 nm-1' with superscript minus signs, for axis titles.

    >>> unit_html("W m-2 sr-1 nm-1")
    'W m⁻² sr⁻¹ nm⁻¹'
    """
    return unit.replace("-1", "⁻¹").replace("-2", "⁻²").replace("-3", "⁻³")


def spectrum_figure(grid_nm: np.ndarray, density: np.ndarray, lines: Sequence[dict], *, medium: str,
                    title: str, max_marked: int = 40, quantity: str = "emission coefficient",
                    unit: str = "W m-3 sr-1 nm-1") -> dict:
    """Synthetic spectrum with the strongest lines marked and labelled on hover; the y axis names the
    ``quantity`` (emission coefficient when optically thin, spectral radiance through a path) and its ``unit``."""
    marked = sorted(lines, key=lambda r: -r["rel_intensity"])[:max_marked]
    peak = float(np.max(density)) if len(density) else 1.0
    xs, ys, text = [], [], []
    for row in marked:
        x = row["air_nm"] if (medium == "air" and row.get("air_nm") is not None) else row["vacuum_nm"]
        xs.extend([x, x, None])
        ys.extend([0.0, peak * row["rel_intensity"] * 1.05, None])
        name = hydrogen_line_name(row["spectrum"], principal_number(row["lower"]), principal_number(row["upper"]))
        label = (f"{_escape(row['spectrum'])} {_escape(name) + ' ' if name else ''}"
                 f"{_escape(display_label(row['lower'], superscripts=True))} – "
                 f"{_escape(display_label(row['upper'], superscripts=True))}"
                 f"<br>{x:.4f} nm ({medium})"
                 f"<br>rel. intensity {row['rel_intensity']:.3g}<br>A {row['a_per_s']:.3e} s⁻¹")
        text.extend([label, label, None])
    data = [
        {"type": "scatter", "mode": "lines", "x": np.asarray(grid_nm).tolist(), "y": np.asarray(density).tolist(),
         "name": "synthetic spectrum", "line": {"color": SPECTRUM_LINE, "width": 1.2}, "hoverinfo": "x+y"},
        {"type": "scatter", "mode": "lines", "x": xs, "y": ys, "name": "strongest lines", "text": text,
         "hoverinfo": "text", "line": {"color": ACCENT["E1"], "width": 1, "dash": "dot"}},
    ]
    layout = {
        "title": {"text": title, "font": {"color": INK}},
        "xaxis": {"title": {"text": f"wavelength in {medium} [nm]"}, "gridcolor": GRID},
        "yaxis": {"title": {"text": f"{quantity} [{unit_html(unit)}]"}, "gridcolor": GRID, "rangemode": "tozero"},
        "plot_bgcolor": "#fbfcfd", "paper_bgcolor": "#ffffff", "hovermode": "closest",
        "legend": {"orientation": "h", "y": -0.2},
    }
    return {"data": data, "layout": layout}


def model_comparison_figure(primary: dict, primary_model: str, other: dict | None, other_model: str,
                            populations: dict[str, Sequence[dict]], *, medium: str,
                            other_note: str | None = None) -> dict:
    """LTE and CR spectra side by side for the same conditions, and departure coefficients against level energy.

    Parameters
    ----------
    primary : dict
        The spectrum figure of the model asked for (one x/y axis pair; its traces keep their ``meta``).
    primary_model, other_model : {"lte", "cr"}
        The two models; LTE always goes on the left, CR on the right.
    other : dict or None
        The spectrum figure of the other model, or None when it could not be computed.
    populations : dict
        Model -> population rows (``label``, ``energy_cm1``, ``departure``) for the departure panel.
    medium : {"air", "vacuum"}
    other_note : str, optional
        Why the other model is missing (shown in its panel).

    Returns
    -------
    dict
        One plotly figure: spectra in the top row (axes x/y and x2/y2), departure coefficients
        b = n / n_Boltzmann (log scale) against level energy below (x3/y3).
    """
    left_is_primary = primary_model == "lte"
    panels = {"x": (0.0, 0.47), "x2": (0.53, 1.0)}
    data: list[dict] = []

    def place(fig: dict | None, axis: str, model: str) -> None:
        if fig is None:
            return
        suffix = "" if axis == "x" else axis[1:]
        for trace in fig["data"]:
            moved = dict(trace)
            moved["xaxis"], moved["yaxis"] = axis, "y" + suffix
            moved["name"] = f"{model.upper()}: {trace.get('name', '')}"
            if fig is not primary and moved.get("meta") in ("spectrum", "lines"):
                moved["meta"] = f"{moved['meta']}-{model}"
            data.append(moved)

    lte_fig, cr_fig = (primary, other) if left_is_primary else (other, primary)
    place(lte_fig, "x", "lte")
    place(cr_fig, "x2", "cr")
    colours = {"lte": SPECTRUM_LINE, "cr": ACCENT["E1"]}
    for model in ("lte", "cr"):
        rows = [p for p in populations.get(model) or [] if p.get("departure") not in (None, 0.0)
                and math.isfinite(p["departure"])]
        if not rows:
            continue
        data.append({"type": "scatter", "mode": "markers", "xaxis": "x3", "yaxis": "y3",
                     "name": f"{model.upper()} departure coefficients", "meta": f"departure-{model}",
                     "x": [p["energy_cm1"] for p in rows], "y": [p["departure"] for p in rows],
                     "text": [_escape(display_label(str(p["label"]), superscripts=True)) for p in rows],
                     "hoverinfo": "text+x+y",
                     "marker": {"size": 6, "color": colours[model],
                                "symbol": "circle" if model == "cr" else "line-ew-open"}})
    axis_title = f"wavelength in {medium} [nm]"
    base = primary.get("layout", {})
    layout = {
        "paper_bgcolor": base.get("paper_bgcolor", "#ffffff"), "plot_bgcolor": base.get("plot_bgcolor", "#fbfcfd"),
        "font": base.get("font", {}), "hovermode": "closest", "margin": {"l": 90, "r": 20, "t": 40, "b": 60},
        "height": 720,
        "xaxis": {"title": {"text": axis_title}, "domain": list(panels["x"]), "anchor": "y", "gridcolor": GRID},
        "yaxis": {"title": {"text": primary.get("layout", {}).get("yaxis", {}).get("title", {}).get(
                      "text", "emission coefficient [W m⁻³ sr⁻¹ nm⁻¹]").replace(" [", "<br>[")},
                  "domain": [0.55, 1.0], "anchor": "x",
                  "rangemode": "tozero", "exponentformat": "power", "gridcolor": GRID},
        "xaxis2": {"title": {"text": axis_title}, "domain": list(panels["x2"]), "anchor": "y2", "gridcolor": GRID,
                   "matches": "x"},
        "yaxis2": {"domain": [0.55, 1.0], "anchor": "x2", "rangemode": "tozero", "exponentformat": "power",
                   "gridcolor": GRID},
        "xaxis3": {"title": {"text": "level energy [cm⁻¹]"}, "domain": [0.0, 1.0], "anchor": "y3", "gridcolor": GRID},
        "yaxis3": {"title": {"text": "departure b<br>n / n(Boltzmann at Te)"}, "type": "log", "domain": [0.0, 0.3],
                   "anchor": "x3", "exponentformat": "power", "gridcolor": GRID},
        "legend": {"orientation": "h", "y": -0.1, "x": 0},
        "annotations": [
            {"text": "LTE populations" + (" (asked for)" if left_is_primary else ""), "xref": "paper",
             "yref": "paper", "x": 0.0, "y": 1.04, "showarrow": False, "xanchor": "left"},
            {"text": "collisional-radiative populations" + ("" if left_is_primary else " (asked for)"),
             "xref": "paper", "yref": "paper", "x": 0.53, "y": 1.04, "showarrow": False, "xanchor": "left"},
        ],
        "meta": base.get("meta", {}),
    }
    if other is None and other_note:
        x = 0.765 if left_is_primary else 0.235
        layout["annotations"].append({"text": _escape(other_note)[:160], "xref": "paper", "yref": "paper", "x": x,
                                      "y": 0.72, "showarrow": False, "font": {"color": ACCENT["E1"]}})
    return {"data": data, "layout": layout}


def write_html(figure: dict, path: str, title: str) -> None:
    """A self-contained HTML page with the figure, plotly inlined (no network needed)."""
    import plotly.io as pio

    from levels.io.tables import write_atomic

    html = pio.to_html(figure, include_plotlyjs=True, full_html=True, default_width="100%", default_height="85vh")
    html = html.replace("<head>", f"<head><title>{_escape(title)}</title>", 1)
    write_atomic(path, html)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def figure_json(figure: dict) -> str:
    """JSON text of a figure (NaN becomes null)."""
    return json.dumps(figure, allow_nan=False, default=_default)


def _default(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "tolist"):
        return value.tolist()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


# ----------------------------------------------------------------- measured spectra (peaks, calibration, Boltzmann)

FIT_LINE = "#c2410c"
RESIDUAL = "#64748b"


def _thin(x: np.ndarray, *ys: np.ndarray, max_points: int = 20000):
    """Every k-th sample so a browser stays responsive (peaks keep their fitted curves)."""
    step = max(1, int(math.ceil(len(x) / max_points)))
    return (np.asarray(x)[::step],) + tuple(np.asarray(y)[::step] for y in ys)


def peak_fit_figure(x: np.ndarray, y: np.ndarray, model: np.ndarray, peaks: Sequence[dict], *, axis_title: str,
                    title: str) -> dict:
    """A measured spectrum with the fitted model, the peak centres marked, and the residuals below."""
    xs, ys, ms = _thin(x, y, model)
    resid = ys - ms
    marks_x = [p["peak_nm"] if "centre_axis" not in p else p["centre_axis"] for p in peaks]
    hover = [f"{p['peak_nm']:.5f} ± {p['peak_unc_nm']:.2g} nm ({_escape(p['medium'])})<br>FWHM {p['fwhm_nm']:.4g} nm"
             f"<br>area {p['area']:.4g} ± {p['area_unc']:.2g}<br>S/N {p['snr']:.1f}" for p in peaks]
    heights = np.interp(marks_x, xs, ms) if len(peaks) else []
    data = [
        {"type": "scatter", "mode": "lines", "x": xs.tolist(), "y": ys.tolist(), "name": "measured",
         "line": {"color": SPECTRUM_LINE, "width": 1}, "xaxis": "x", "yaxis": "y"},
        {"type": "scatter", "mode": "lines", "x": xs.tolist(), "y": ms.tolist(), "name": "fit",
         "line": {"color": FIT_LINE, "width": 1.2}, "xaxis": "x", "yaxis": "y"},
        {"type": "scatter", "mode": "markers", "x": list(marks_x), "y": list(np.asarray(heights).tolist()),
         "name": "peaks", "text": hover, "hoverinfo": "text", "marker": {"color": INK, "symbol": "triangle-down",
                                                                           "size": 8}, "xaxis": "x", "yaxis": "y"},
        {"type": "scatter", "mode": "lines", "x": xs.tolist(), "y": resid.tolist(), "name": "measured − fit",
         "line": {"color": RESIDUAL, "width": 1}, "xaxis": "x", "yaxis": "y2"},
    ]
    layout = {
        "title": {"text": title, "font": {"color": INK}},
        "xaxis": {"title": {"text": axis_title}, "gridcolor": GRID, "anchor": "y2"},
        "yaxis": {"title": {"text": "intensity"}, "gridcolor": GRID, "domain": [0.3, 1.0]},
        "yaxis2": {"title": {"text": "residual"}, "gridcolor": GRID, "domain": [0.0, 0.22]},
        "plot_bgcolor": "#fbfcfd", "paper_bgcolor": "#ffffff", "hovermode": "closest",
        "legend": {"orientation": "h", "y": -0.15},
    }
    return {"data": data, "layout": layout}


def calibration_figure(report: dict, *, title: str) -> dict:
    """Residuals of a dispersion fit against the axis: used lines filled, rejected ones open."""

    def trace(rows, name, symbol, color):
        return {"type": "scatter", "mode": "markers", "name": name,
                "x": [r["pixel"] for r in rows], "y": [r["residual_nm"] * 1e3 for r in rows],
                "text": [f"{_escape(r.get('spectrum', ''))} {_escape(r['lower'])} – {_escape(r['upper'])}<br>"
                         f"{r['line_nm']:.5f} nm<br>residual {r['residual_nm'] * 1e3:.3f} pm" for r in rows],
                "hoverinfo": "text", "marker": {"symbol": symbol, "size": 9, "color": color}}

    xs = [r["pixel"] for r in report["lines_used"] + report["rejected"]]
    rms = report["rms_nm"] * 1e3
    band = [] if not xs else [
        {"type": "scatter", "mode": "lines", "x": [min(xs), max(xs)], "y": [rms, rms], "name": f"± RMS {rms:.3f} pm",
         "line": {"color": GRID, "dash": "dash"}},
        {"type": "scatter", "mode": "lines", "x": [min(xs), max(xs)], "y": [-rms, -rms], "showlegend": False,
         "line": {"color": GRID, "dash": "dash"}, "hoverinfo": "skip"}]
    data = [trace(report["lines_used"], "lines used", "circle", SPECTRUM_LINE),
            trace(report["rejected"], "rejected", "circle-open", ACCENT["E1"])] + band
    layout = {"title": {"text": title, "font": {"color": INK}},
              "xaxis": {"title": {"text": "pixel" if report.get("axis") == "pixel" else "rough axis"},
                        "gridcolor": GRID},
              "yaxis": {"title": {"text": "line − polynomial [pm]"}, "gridcolor": GRID, "zeroline": True},
              "plot_bgcolor": "#fbfcfd", "paper_bgcolor": "#ffffff", "hovermode": "closest",
              "legend": {"orientation": "h", "y": -0.2}}
    return {"data": data, "layout": layout}


def boltzmann_figure(report: dict, *, title: str) -> dict:
    """ln(I λ / (g_u A)) against upper energy with the fitted line; outliers open."""
    pts = report["boltzmann"]
    data = []
    for flag, name, symbol in ((False, "lines", "circle"), (True, "left out", "x-open")):
        rows = [p for p in pts if bool(p.get("outlier")) == flag]
        if not rows:
            continue
        data.append({"type": "scatter", "mode": "markers", "name": name,
                     "x": [p["upper_cm1"] for p in rows], "y": [p["ln_y"] for p in rows],
                     "error_y": {"type": "data", "array": [p.get("ln_y_unc") or 0.0 for p in rows], "visible": True},
                     "text": [f"{_escape(p.get('spectrum') or '')} {_escape(p['lower'])} – {_escape(p['upper'])}"
                              f"<br>{p.get('peak_nm', 0):.4f} nm" for p in rows], "hoverinfo": "text+x+y",
                     "marker": {"symbol": symbol, "size": 9,
                                "color": ACCENT["E1"] if flag else SPECTRUM_LINE}})
    te = report.get("te_k")
    used = [p for p in pts if not p.get("outlier") and p.get("residual") is not None]
    if te and used:
        from levels.units import CM1_J, K_B

        e = np.array([p["upper_cm1"] for p in used])
        y = np.array([p["ln_y"] - p["residual"] for p in used])
        lo, hi = float(e.min()), float(e.max())
        slope = -CM1_J / (K_B * te)
        icpt = float(np.mean(y - slope * e))
        data.append({"type": "scatter", "mode": "lines", "x": [lo, hi], "y": [icpt + slope * lo, icpt + slope * hi],
                     "name": f"Te = {te:.0f} ± {report.get('te_unc_k') or 0:.0f} K",
                     "line": {"color": FIT_LINE}})
    layout = {"title": {"text": title, "font": {"color": INK}},
              "xaxis": {"title": {"text": "upper-level energy [cm⁻¹]"}, "gridcolor": GRID},
              "yaxis": {"title": {"text": "ln(I λ / (g_u A))"}, "gridcolor": GRID},
              "plot_bgcolor": "#fbfcfd", "paper_bgcolor": "#ffffff", "hovermode": "closest",
              "legend": {"orientation": "h", "y": -0.2}}
    return {"data": data, "layout": layout}
