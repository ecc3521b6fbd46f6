"""Line-list selections and summaries: lower-level and series filters, customary hydrogen names, multiplets.

Units of work on line rows (``levels.catalog.LINE_COLUMNS``) that the CLI (``levels lines``), the web site and
the JSON API share. No store access: the rows come from :meth:`levels.catalog.Catalog.species_lines` or
:meth:`levels.catalog.Catalog.line_rows`.

Multiplets (:func:`merge_multiplets`) follow the usual sums over the fine-structure components of one
configuration and term pair: the multiplet line strength is the sum of the component strengths, S_M = sum S;
the multiplet oscillator strength is g_L f_M = sum g_l f (g_L the total weight of the lower term's levels
present); the multiplet A is g_U A_M = sum g_u A; the multiplet wavenumber is the gf-weighted mean of the
component wavenumbers (A-weighted, i.e. by g_u A, when only A is known; the plain mean when neither is).
Cowan, *The Theory of Atomic Structure and Spectra* (University of California Press, 1981), sec. 14.6
(multiplet and line strengths; from memory) and Wiese, Smith & Glennon, NSRDS-NBS 4 (1966), introduction
(multiplet f and A values, g-weighted sums; from memory).
"""

from __future__ import annotations

import fnmatch
import math
import re
from collections.abc import Mapping, Sequence
from typing import Any, TypeVar

from levels.errors import PhysicsInputError
from levels.notation import (
    hydrogen_line_name,
    hydrogen_series_of_name,
    label_key,
    label_pattern_to_regex,
    principal_number,
)
from levels.service.contract import LineRow

#: columns of a multiplet row: the line-list columns (lower/upper are "configuration term", energies the
#: g-weighted means of the levels present, wavelengths from the weighted wavenumber) plus these
MULTIPLET_EXTRA_COLUMNS = ("gf", "members", "weighting")
#: what a multiplet row is, in words (the provenance of every multiplet list: CLI, Python API, web, JSON API)
MULTIPLETS_NOTE = ("components of one configuration and term pair summed: S and g f summed, g_U A = sum g_u A, "
                   "wavenumber g f-weighted (gA-weighted without f)")
_J_SUFFIX = re.compile(r"(?:J=)?[0-9]+(?:/2)?$")


def level_matcher(pattern: str):
    """A predicate on level labels: an exact label, a glob (``*``, ``?``), or a series pattern (``n`` running).

    >>> m = level_matcher("ns 2S1/2")
    >>> m("1s2.5s 2S1/2"), m("1s2.5p 2P°1/2")
    (True, False)
    >>> level_matcher("2p*")("2p 2P°3/2"), level_matcher("2p 2P°3/2")("2p 2P°1/2")
    (True, False)
    """
    text = pattern.strip()
    if not text:
        raise PhysicsInputError("a level pattern must not be empty")
    if any(c in text for c in "*?["):
        return lambda label: fnmatch.fnmatchcase(label, text)
    regex = None
    config = text.split(" ")[0]
    if "n" in config:
        try:
            regex = label_pattern_to_regex(text)
        except Exception:  # not a series pattern: compare as a label
            regex = None
    if regex is not None:
        return lambda label: label == text or regex.match(label) is not None
    key = label_key(text)   # a label typed as tables show it (spaces between subshells) matches the stored one
    return lambda label: label == text or label_key(label) == key


#: a line row of any shape (the service's :class:`~levels.service.contract.LineRow`, a test's plain dict)
Row = TypeVar("Row", bound=Mapping[str, Any])


def filter_lines(rows: Sequence[Row], *, lower: str | None = None, series: str | None = None,
                 name: str | None = None) -> list[Row]:
    """Rows whose lower level matches ``lower``, whose upper level matches the series pattern ``series``
    (``"np 2P°3/2"``, ``n`` the running number; an exact label or a glob works too), and whose customary
    hydrogen name is ``name`` (``Hα``, ``H-alpha``, ``Lyb``...).

    >>> rows = [dict(spectrum="H I", lower="2s 2S1/2", upper="3p 2P°1/2"),
    ...         dict(spectrum="H I", lower="2s 2S1/2", upper="4p 2P°1/2")]
    >>> [r["upper"] for r in filter_lines(rows, series="np 2P°1/2", name="H-beta")]
    ['4p 2P°1/2']
    """
    keep = list(rows)
    if lower:
        match = level_matcher(lower)
        keep = [r for r in keep if match(r["lower"])]
    if series:
        match = level_matcher(series)
        keep = [r for r in keep if match(r["upper"])]
    if name:
        wanted = hydrogen_series_of_name(name)
        if wanted is None:
            raise PhysicsInputError(f"{name!r} is not a hydrogen line name (Lyα, Hβ, Pa9, H-alpha ...)")
        keep = [r for r in keep if (principal_number(r["lower"]), principal_number(r["upper"])) == wanted
                and hydrogen_line_name(r["spectrum"], *wanted) is not None]
    return keep


def add_line_names(rows: Sequence[dict]) -> Sequence[dict]:
    """Set ``line_name`` of each row: the customary hydrogen name (H I, D I, T I) or None. In place.

    >>> add_line_names([dict(spectrum="H I", lower="2p 2P°3/2", upper="3d 2D5/2")])[0]["line_name"]
    'Hα'
    """
    for row in rows:
        row["line_name"] = hydrogen_line_name(row["spectrum"], principal_number(row["lower"]),
                                              principal_number(row["upper"]))
    return rows


def term_of(label: str) -> str:
    """A level label without its J: ``'3d 2D5/2'`` -> ``'3d 2D'``; ``'2p5(2P°3/2)3p 2[5/2]2'`` -> ``'... 2[5/2]'``.

    >>> term_of("3d 2D5/2"), term_of("1s2.2p 2P°1/2"), term_of("2p5(2P°3/2)3p 2[5/2]2")
    ('3d 2D', '1s2.2p 2P°', '2p5(2P°3/2)3p 2[5/2]')
    """
    config, _, rest = label.partition(" ")
    term = _J_SUFFIX.sub("", rest)
    return f"{config} {term}".strip()


def _weighted(values, weights):
    total = sum(weights)
    return sum(v * w for v, w in zip(values, weights)) / total


def one_row_per_pair(rows: Sequence[Row]) -> list[Row]:
    """One row per (spectrum, lower, upper, multipole), in first-seen order: the first with a known A, else the
    first (a measured line and the Ritz line of the same pair are one transition)."""
    chosen: dict[tuple, Row] = {}
    for row in rows:
        key = (row["spectrum"], row["lower"], row["upper"], row["multipole"])
        kept = chosen.get(key)
        if kept is None or (kept.get("a_per_s") is None and row.get("a_per_s") is not None):
            chosen[key] = row
    return list(chosen.values())


def merge_multiplets(rows: Sequence[Mapping[str, Any]], *, medium: str = "air",
                     air_formula: str = "iau2000") -> list[LineRow]:
    """Sum fine-structure components into multiplets (same spectrum, configuration and term pair, multipole).

    See the module docstring for the sums and their sources. ``gf`` is sum g_l f (None unless every
    component has f), ``members`` the number of components, ``weighting`` how the wavenumber was averaged
    (``gf``, ``gA`` or ``none``). A, f and S are None unless every component has them.

    Examples
    --------
    >>> rows = [dict(spectrum="X I", lower="2s 2S1/2", upper="2p 2P°1/2", lower_cm1=0.0, upper_cm1=20000.0,
    ...              multipole="E1", a_per_s=1.0, f_abs=0.1, line_strength_au=1.0, g_lower=2, g_upper=2,
    ...              unc_nm=None, dataset="d"),
    ...         dict(spectrum="X I", lower="2s 2S1/2", upper="2p 2P°3/2", lower_cm1=0.0, upper_cm1=20003.0,
    ...              multipole="E1", a_per_s=1.0, f_abs=0.2, line_strength_au=2.0, g_lower=2, g_upper=4,
    ...              unc_nm=None, dataset="d")]
    >>> m = merge_multiplets(rows, medium="vacuum")[0]
    >>> m["members"], round(m["gf"], 3), m["line_strength_au"], round(m["wavenumber_cm1"], 6), m["g_upper"]
    (2, 0.6, 3.0, 20002.0, 6)

    A pair listed twice (a measured line beside the Ritz line of the same two levels) is one component:

    >>> merge_multiplets(rows + [dict(rows[1], a_per_s=None, f_abs=None, line_strength_au=None, dataset="m")],
    ...                  medium="vacuum")[0]["members"]
    2
    """
    from levels.physics.lines import air
    groups: dict[tuple, list[Mapping[str, Any]]] = {}
    for row in one_row_per_pair(rows):
        key = (row["spectrum"], term_of(row["lower"]), term_of(row["upper"]), row["multipole"])
        groups.setdefault(key, []).append(row)
    out: list[LineRow] = []
    for (spectrum, lower, upper, multipole), members in groups.items():
        lowers = {r["lower"]: (r["lower_cm1"], r["g_lower"]) for r in members}
        uppers = {r["upper"]: (r["upper_cm1"], r["g_upper"]) for r in members}
        g_l = sum(g for _, g in lowers.values())
        g_u = sum(g for _, g in uppers.values())
        e_l = _weighted([e for e, _ in lowers.values()], [g for _, g in lowers.values()])
        e_u = _weighted([e for e, _ in uppers.values()], [g for _, g in uppers.values()])
        sigma = [r["upper_cm1"] - r["lower_cm1"] for r in members]
        gf = [r["g_lower"] * r["f_abs"] for r in members] if all(r.get("f_abs") for r in members) else None
        ga = [r["g_upper"] * r["a_per_s"] for r in members] if all(r.get("a_per_s") for r in members) else None
        if gf:
            wavenumber, weighting = _weighted(sigma, gf), "gf"
        elif ga:
            wavenumber, weighting = _weighted(sigma, ga), "gA"
        else:
            wavenumber, weighting = sum(sigma) / len(sigma), "none"
        strengths = [r["line_strength_au"] for r in members if r.get("line_strength_au") is not None]
        vacuum = 1e7 / wavenumber if wavenumber > 0 else math.nan
        air_nm = float(air.vacuum_to_air(vacuum, air_formula)) if vacuum > 200 else None
        uncs = [r["unc_nm"] for r in members if r.get("unc_nm") is not None]
        summed: LineRow = {
            "spectrum": spectrum, "lower": lower, "upper": upper, "lower_cm1": e_l, "upper_cm1": e_u,
            "wavenumber_cm1": wavenumber, "vacuum_nm": vacuum, "air_nm": air_nm, "multipole": multipole,
            "a_per_s": sum(ga) / g_u if ga else None, "f_abs": sum(gf) / g_l if gf else None,
            "line_strength_au": sum(strengths) if len(strengths) == len(members) else None,
            "g_lower": g_l, "g_upper": g_u, "unc_nm": max(uncs) if uncs else None,
            "dataset": ", ".join(sorted({r["dataset"] for r in members})),
            "gf": sum(gf) if gf else None, "members": len(members), "weighting": weighting,
        }
        out.append(summed)

    def position(row: LineRow) -> float:
        return row["air_nm"] if medium == "air" and row["air_nm"] is not None else row["vacuum_nm"]

    return sorted(out, key=position)


def hydrogen_names(spectrum: str, lowers: Sequence[str], uppers: Sequence[str]) -> list[str | None]:
    """Customary hydrogen names of the lines ``lowers[i] -> uppers[i]`` of one spectrum (None where none).

    >>> hydrogen_names("H I", ["2s 2S1/2", "1s 2S1/2"], ["3p 2P°3/2", "2p 2P°1/2"])
    ['Hα', 'Lyα']
    >>> hydrogen_names("He II", ["2s 2S1/2"], ["3p 2P°3/2"])
    [None]
    """
    if hydrogen_line_name(spectrum, 1, 2) is None:
        return [None] * len(lowers)
    return [hydrogen_line_name(spectrum, principal_number(lo), principal_number(up)) for lo, up in zip(lowers, uppers)]
