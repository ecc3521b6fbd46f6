"""The provenance header of ``levels peaks`` and ``levels rates`` exports (issue 14, item 4).

Every export names the tool version, the store, exactly the datasets behind its rows, the query and the air
formula applied. Peaks come from a spectrum file, not the store: their header names the file, its SHA-256,
the fit options and the medium of the wavelength axis. Each export is read back with pandas
(``comment="#"``) and astropy (ECSV ``meta``), and its header fields are checked.

The spectra are invented (two Gaussian lines on a flat baseline with seeded noise); the Na I levels are the
ones of tests/service/test_rates.py (from memory of the published analyses).
"""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pandas as pd
import pytest
from astropy.table import Table
from click.testing import CliRunner

from levels import __version__
from levels.cli import main

from tests.service.test_rates import NA_LEVELS, _levels_file

FORMATS = ("csv", "json", "ecsv")
CENTRES_NM = (503.0, 507.0)  # invented lines


def _spectrum(path, medium="vacuum"):
    x = np.linspace(500.0, 510.0, 2001)
    rng = np.random.default_rng(14)
    y = 5.0 + rng.normal(0.0, 1.0, x.size)
    for centre, height in zip(CENTRES_NM, (100.0, 50.0)):
        y += height * np.exp(-0.5 * ((x - centre) / 0.05) ** 2)
    lines = [f"# medium: {medium}", "# invented spectrum for a test", "wavelength_nm,intensity"]
    lines += [f"{a:.5f},{b:.4f}" for a, b in zip(x, y)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _header(path, fmt) -> dict:
    """The export's header as a dict, read the way a user would for each format."""
    if fmt == "json":
        return json.loads(path.read_text(encoding="utf-8"))["provenance"]
    if fmt == "ecsv":
        return dict(Table.read(path, format="ascii.ecsv").meta)
    head = {}
    for line in path.read_text(encoding="utf-8").splitlines():
        if not line.startswith("# "):
            break
        key, _, value = line[2:].partition(": ")
        head[key] = value
    return head


def _rows(path, fmt, key="rows"):
    """The rows read back: pandas for CSV, astropy for ECSV (also pandas, comment='#'), json for JSON."""
    if fmt == "json":
        return pd.DataFrame(json.loads(path.read_text(encoding="utf-8"))[key])
    frame = pd.read_csv(path, comment="#")
    if fmt == "ecsv":  # astropy reads the same values as pandas
        table = Table.read(path, format="ascii.ecsv")
        assert list(table.colnames) == list(frame.columns)
        for name in frame.columns:
            if frame[name].dtype.kind == "f":
                assert np.array_equal(np.asarray(table[name], dtype=float), frame[name].to_numpy(dtype=float),
                                      equal_nan=True)
    return frame


def _run(args):
    result = CliRunner().invoke(main, args, catch_exceptions=False)
    assert result.exit_code == 0, result.output
    return result


@pytest.mark.parametrize("fmt", FORMATS)
def test_peaks_export_names_file_digest_fit_and_medium(tmp_path, fmt):
    spectrum = _spectrum(tmp_path / "cell.csv")
    out = tmp_path / f"peaks.{fmt}"
    _run(["--db", str(tmp_path / "unused.sqlite"), "peaks", str(spectrum), "--profile", "voigt", "--min-snr", "8",
          "--format", fmt, "--output", str(out)])
    head = _header(out, fmt)
    assert list(head)[:5] == ["tool", "store", "datasets", "query", "air_formula"]
    assert head["tool"] == f"levels {__version__}"
    assert "not used" in head["store"] and "none" in head["datasets"]
    assert head["input"] == str(spectrum)
    assert head["input_sha256"] == hashlib.sha256(spectrum.read_bytes()).hexdigest()
    assert "profile voigt" in head["fit"] and "min S/N 8" in head["fit"]
    assert "profile voigt" in head["query"] and str(spectrum) in head["query"]
    # the file states vacuum and no other medium was asked: nothing converted
    assert head["medium"].startswith("vacuum") and head["air_formula"].startswith("none applied")
    rows = _rows(out, fmt)
    assert len(rows) == 2 and set(rows["medium"]) == {"vacuum"}
    assert np.allclose(sorted(rows["peak_nm"]), CENTRES_NM, atol=0.005)
    assert not (tmp_path / "unused.sqlite").exists()


@pytest.mark.parametrize("fmt", FORMATS)
def test_peaks_converted_to_air_name_the_formula(tmp_path, fmt):
    spectrum = _spectrum(tmp_path / "cell.csv")
    out = tmp_path / f"peaks.{fmt}"
    _run(["peaks", str(spectrum), "--medium", "air", "--format", fmt, "--output", str(out)])
    head = _header(out, fmt)
    assert "Morton 2000" in head["air_formula"] and "vacuum to air" in head["air_formula"]
    assert head["medium"].startswith("air (converted from vacuum")
    rows = _rows(out, fmt)
    assert set(rows["medium"]) == {"air"}
    # air wavelengths near 500 nm are shorter than vacuum ones by about 0.14 nm (n - 1 ~ 2.8e-4, from memory)
    assert np.all(np.sort(rows["peak_nm"].to_numpy()) < np.array(CENTRES_NM) - 0.1)


def test_peaks_header_names_the_calibration_and_its_digest(tmp_path):
    x = np.arange(1, 1201)
    y = 3.0 + 80.0 * np.exp(-0.5 * ((x - 600) / 4.0) ** 2) + np.random.default_rng(7).normal(0.0, 0.5, x.size)
    frame = tmp_path / "frame.csv"
    frame.write_text("pixel,intensity\n" + "\n".join(f"{a},{b:.5f}" for a, b in zip(x, y)) + "\n")
    cal = tmp_path / "cal.json"
    cal.write_text(json.dumps({"degree": 1, "coefficients": [500.0, 0.01], "medium": "air", "rms_nm": 0.001}))
    out = tmp_path / "peaks.ecsv"
    _run(["peaks", str(frame), "--calibration", str(cal), "--format", "ecsv", "--output", str(out)])
    head = _header(out, "ecsv")
    assert head["calibration"] == str(cal)
    assert head["calibration_sha256"] == hashlib.sha256(cal.read_bytes()).hexdigest()
    assert head["input_sha256"] == hashlib.sha256(frame.read_bytes()).hexdigest()
    assert head["axis"] == "pixel" and head["medium"] == "air (as the calibration states)"
    assert np.allclose(_rows(out, "ecsv")["peak_nm"], [506.0], atol=1e-3)  # 500 + 0.01 x 600


@pytest.fixture
def sodium_and_more(catalog, tmp_path):
    catalog.import_file(_levels_file(tmp_path, NA_LEVELS), dataset="na-levels")
    # another species' dataset in the same store: it must not appear in the rates header
    catalog.import_file(_levels_file(tmp_path, "K I,4s,2S,1/2,0.0,\nK I,4p,2P°,1/2,12985.19,0.01\n", "k.csv"),
                        dataset="k-levels")
    return catalog


@pytest.mark.parametrize("fmt", FORMATS)
def test_rates_export_names_input_datasets_method_and_output(sodium_and_more, store_url, tmp_path, fmt):
    out = tmp_path / f"rates.{fmt}"
    _run(["--db", store_url, "rates", "Na I", "--method", "single", "--format", fmt, "--output", str(out)])
    head = _header(out, fmt)
    assert list(head)[:5] == ["tool", "store", "datasets", "query", "air_formula"]
    assert head["tool"] == f"levels {__version__}"
    assert head["store"] == sodium_and_more.display_url
    assert head["datasets"] == "na-levels"
    assert head["query"] == "rates Na I; method single"
    assert head["air_formula"].startswith("none applied")
    assert head["method"].startswith("single-valence")
    assert head["method_version"] == f"levels {__version__}"
    assert head["output_dataset"] == "rates Na I A=23"
    assert "fitted here" in head["ionization"] or "stored in dataset" in head["ionization"]
    rows = _rows(out, fmt, key="lines")
    assert len(rows) > 0 and {"lower", "upper", "vacuum_nm", "a_per_s"} <= set(rows.columns)
    assert (rows["a_per_s"] > 0).all()
    if fmt == "ecsv":
        table = Table.read(out, format="ascii.ecsv")
        assert str(table["a_per_s"].unit) == "1 / s" and str(table["vacuum_nm"].unit) == "nm"
    stored = {d["name"] for d in sodium_and_more.dataset_rows()}
    assert head["output_dataset"] in stored
