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

#: our palette (invented for this project): ink, slate, and an accent per multipole
INK = "#1d2633"
GRID = "#d8dee6"
ACCENT = {"E1": "#c2410c", "M1": "#0f766e", "E2": "#6d28d9"}
SPECTRUM_LINE = "#0b4f8a"


def spectrum_figure(grid_nm: np.ndarray, density: np.ndarray, lines: Sequence[dict], *, medium: str,
                    title: str, max_marked: int = 40) -> dict:
    """Synthetic spectrum with the strongest lines marked and labelled on hover."""
    marked = sorted(lines, key=lambda r: -r["rel_intensity"])[:max_marked]
    peak = float(np.max(density)) if len(density) else 1.0
    xs, ys, text = [], [], []
    for row in marked:
        x = row["air_nm"] if (medium == "air" and row.get("air_nm") is not None) else row["vacuum_nm"]
        xs.extend([x, x, None])
        ys.extend([0.0, peak * row["rel_intensity"] * 1.05, None])
        label = (f"{_escape(row['spectrum'])} {_escape(row['lower'])} – {_escape(row['upper'])}"
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
        "yaxis": {"title": {"text": "spectral radiance [W m⁻³ sr⁻¹ nm⁻¹]"}, "gridcolor": GRID, "rangemode": "tozero"},
        "plot_bgcolor": "#fbfcfd", "paper_bgcolor": "#ffffff", "hovermode": "closest",
        "legend": {"orientation": "h", "y": -0.2},
    }
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
