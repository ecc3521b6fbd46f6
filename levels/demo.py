"""The invented demo store: computed H I, D I, He II and the invented lithium-cell sample.

Everything under ``seed_data/demo/`` is INVENTED for demonstration; none of it
is a measurement of a real sample, lamp or instrument.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

from levels.catalog import Catalog
from levels.errors import AlreadyExistsError, LevelsError

DEMO_DIR = Path(__file__).resolve().parent.parent / "seed_data" / "demo"


def demo_file(name: str) -> Path:
    """Path of a demo file (the source tree's seed_data/demo)."""
    path = DEMO_DIR / name
    if not path.exists():
        raise FileNotFoundError(f"demo file {name} not found in {DEMO_DIR}; run from a source checkout")
    return path


def build_demo(catalog: Catalog, *, n_max: int = 20) -> list[str]:
    """Create (or refresh) the demo content in ``catalog``; return what to tell the user."""
    out = [f"store: {catalog.display_url}", f"schema {catalog.init()}"]
    for spectrum in ("H I", "D I", "He II"):
        report = catalog.compute_hydrogenic(spectrum, n_max=n_max)
        out.append(f"computed {report['spectrum']}: {report['levels']} levels, {report['lines']} E1 lines")
    lamp = json.loads(demo_file("lamp-hd-calibration.json").read_text(encoding="utf-8"))
    sample_conditions = {"description": "INVENTED lithium vapour cell of the fictional Brightwater Optics Lab",
                         "gas_fill": "Li vapour with 50 Pa Ar buffer (invented)", "pressure_pa": 50.0,
                         "instrument": "fictional echelle, 0.002 nm resolution", "tgas_k": 750.0}
    try:
        levels = catalog.import_file(demo_file("sample-li-cell.csv"), sample="li-cell-amber",
                                     dataset="li-cell-amber/levels", sample_conditions=sample_conditions)
        lines = catalog.import_file(demo_file("lines-li-cell.csv"), sample="li-cell-amber",
                                    dataset="li-cell-amber/lines")
        out.append(f"imported the invented sample li-cell-amber: {levels.levels} levels, {lines.lines} measured lines")
    except AlreadyExistsError:
        out.append("the invented sample li-cell-amber is already in the store")
    fit = catalog.fit_limit("Li I", ["ns 2S1/2", "nd 2D5/2"], n_min=4)
    out.append(f"fitted the Li I series limit: {fit['limit_cm1']:.3f} ± {fit['limit_unc_cm1']:.3f} cm-1")
    out += _demo_rates(catalog)
    cond = lamp["conditions"]
    out += [
        "",
        "INVENTED demo lamp: " + lamp["name"] + " for the " + lamp["instrument"],
        "try:",
        f"  levels emission \"H I\" --te {cond['te']} --ne {cond['ne']} --tgas {cond['tgas']} "
        f"--from {lamp['window']['from']} --to {lamp['window']['to']} --instrument-fwhm {lamp['instrument_fwhm']} "
        "--plot hd-lamp.html",
        "  levels lines \"He II\" --from 460nm --to 480nm",
        "  levels rates \"Li I\" --format json --output li-rates.json",
        "  levels emission \"Li I\" --te 0.5eV --ne 1e19m-3 --from 400nm --to 900nm --plot li-cell.html",
        "  levels optimize li-cell-amber/lines",
        "  levels identify \"Li I\" seed_data/demo/peaks-li-cell.csv --tolerance 0.003nm",
        "  levels serve        (then open http://127.0.0.1:8150/)",
    ]
    return out


def _demo_rates(catalog: Catalog) -> list[str]:
    """Rates of the invented lithium sample, and of every other invented level sample in seed_data/demo."""
    from levels.service.rates import compute_rates

    out = []
    report = compute_rates(catalog, "Li I")
    out.append(f"computed rates of the invented Li I levels: {len(report.lines)} lines, {len(report.levels)} "
               f"lifetimes ({report.method}) into {report.saved_as!r}")
    for path in sorted(DEMO_DIR.glob("sample-*.csv")):
        if path.name == "sample-li-cell.csv":
            continue
        name = f"demo/{path.stem}"
        try:
            imported = catalog.import_file(path, dataset=name)
            spectra = imported.species
            out.append(f"imported the invented sample {path.name}: {imported.levels} levels of {', '.join(spectra)}")
        except AlreadyExistsError:
            spectra = _species_of(catalog, name)
            out.append(f"the invented sample {path.name} is already in the store")
        for spectrum, patterns in _limit_hints(path).items():
            # the sample's header names the series whose limit its rates need
            if spectrum in spectra:
                try:
                    fit = catalog.fit_limit(spectrum, patterns)
                    out.append(f"fitted the {spectrum} series limit: {fit['limit_cm1']:.3f} ± "
                               f"{fit['limit_unc_cm1']:.3f} cm-1")
                except LevelsError as exc:
                    out.append(f"no series limit for the invented {spectrum} levels: {exc}")
        for spectrum in spectra:
            try:
                other = compute_rates(catalog, spectrum)
                out.append(f"computed rates of the invented {spectrum} levels: {len(other.lines)} lines, "
                           f"skipped {len(other.skipped)} ({other.method})")
            except LevelsError as exc:
                out.append(f"no rates for the invented {spectrum} levels: {exc}")
            if spectrum.startswith("Hg"):
                out.append("CAUTION: mercury is toxic and mercury discharges emit UV-C; handle lamps and spills as "
                           "your local codes and licensed practice require")
    return out


def _species_of(catalog: Catalog, dataset: str) -> list[str]:
    """Spectra whose levels a stored dataset holds."""
    rows = catalog.dataset_rows()
    names = {r["name"] for r in rows}
    if dataset not in names:
        return []
    species = []
    for row in catalog.species_rows():
        if dataset in row["datasets"].split("; "):
            species.append(row["spectrum"])
    return species


_LIMIT_HINT = re.compile(r'^#.*levels limit "([^"]+)"((?:\s+--series\s+"[^"]+")+)')


def _limit_hints(path: Path) -> dict[str, list[str]]:
    """``levels limit "X" --series "P" ...`` hints in a sample's leading comment lines: spectrum -> patterns."""
    hints: dict[str, list[str]] = {}
    with path.open(encoding="utf-8") as handle:
        for line in handle:
            if not line.startswith("#"):
                break
            match = _LIMIT_HINT.match(line.strip())
            if match:
                hints.setdefault(match.group(1), []).extend(re.findall(r'--series\s+"([^"]+)"', match.group(2)))
    return hints
