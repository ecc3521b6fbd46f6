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
        label = (f"{_escape(row['spectrum'])} {_escape(row['lower'])} – {_escape(row['upper'])}<br>{x:.4f} nm ({medium})"
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
