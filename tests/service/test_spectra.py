"""Measured spectra through the store: peaks -> diagnose (Te, ne), lamp calibration, commit, command line.

The spectra are drawn by the project's own emission and line-shape code (levels.emission through the
catalog, levels.physics.plasma.spectrum) from computed H I and D I, plus noise.
"""

from __future__ import annotations

import csv
import io
import json

import numpy as np
import pytest
from click.testing import CliRunner

from levels.catalog import Catalog, LineQuery
from levels.cli import main
from levels.errors import InputFileError, PhysicsInputError
from levels.physics.diagnostics import calibration, stark
from levels.physics.plasma import spectrum as shapes
from levels.service import spectra as service

TRUE = np.array([375.0, 0.02, 1e-7, -2e-12])  # invented spectrograph: nm at pixel p
N_PIX = 16384


@pytest.fixture(scope="module")
def hstore(tmp_path_factory):
    """A SQLite store with computed H I and D I (n <= 10); read only in these tests."""
    path = tmp_path_factory.mktemp("hstore") / "h.sqlite"
    cat = Catalog(f"sqlite:///{path}", actor="pytest")
    cat.init()
    cat.compute_hydrogenic("H I", n_max=10)
    cat.compute_hydrogenic("D I", n_max=10)
    yield cat
    cat.close()


def _csv(rows, columns) -> bytes:
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, extrasaction="ignore")
    writer.writeheader()
    writer.writerows(rows)
    return out.getvalue().encode()


def _spectrum_file(x, y, unc=None, axis="wavelength_nm", medium="air") -> bytes:
    head = f"# invented test spectrum\n# medium: {medium}\n{axis},intensity" + (
        ",intensity_unc" if unc is not None else ""
    )
    lines = [head]
    for i in range(len(x)):
        lines.append(f"{float(x[i])!r},{float(y[i])!r}" + (f",{float(unc[i])!r}" if unc is not None else ""))
    return ("\n".join(lines) + "\n").encode()


def _noisy(y, seed, rel=0.01):
    unc = rel * y + 1e-4 * y.max()
    return y + np.random.default_rng(seed).normal(0.0, 1.0, y.size) * unc, unc


def test_te_from_an_emission_spectrum_within_3_percent(hstore):
    te = 15000.0
    res = hstore.emission(
        "H I",
        te_k=te,
        ne_m3=1e21,
        tgas_k=1000.0,
        from_nm=380.0,
        to_nm=670.0,
        medium="air",
        instrument_fwhm_nm=0.03,
        grid_points=58001,
    )
    y, unc = _noisy(res.spectrum, 7)
    peaks = service.find_peaks(content=_spectrum_file(res.grid_nm, y, unc), source="syn.csv")
    assert len(peaks.rows) >= 6 and peaks.medium == "air"
    peaks_csv = _csv(peaks.rows, service.PEAK_COLUMNS)
    # the CSV is a peaks file for identify (the design's contract)
    ident = hstore.identify_peaks(["H I"], None, tolerance_nm=0.01, content=peaks_csv, source="p.csv")
    assert {r["note"] for r in ident} <= {"", "ambiguous"}
    result = service.diagnose(
        hstore, ["H I"], content=peaks_csv, source="p.csv", instrument_fwhm_nm=0.03, tgas_k=1000.0
    )
    report = result.report
    assert report["te_k"] == pytest.approx(te, rel=0.03)
    assert abs(report["te_k"] - te) < 4 * report["te_unc_k"]
    assert len(report["boltzmann"]) >= 6
    for point in report["boltzmann"]:
        assert set(point) >= {"lower", "upper", "upper_cm1", "ln_y"}
    assert report["validity"]["lte_min_ne_m3"] > 1e22  # the 10.2 eV resonance gap of H I
    assert report["ne_m3"] is None and any("Stark" in w for w in report["warnings"])


@pytest.mark.parametrize("ne0,line_window", [(3e21, (480.0, 492.0)), (1e22, (640.0, 672.0))])
def test_ne_from_a_balmer_line_within_10_percent(hstore, ne0, line_window):
    # line powers from the project's emission code; each line drawn with the Stark width of ne0 (Lorentzian),
    # the Doppler width at 2000 K and a 0.04 nm instrument (Gaussian)
    res = hstore.emission(
        "H I", te_k=12000.0, ne_m3=ne0, tgas_k=2000.0, from_nm=line_window[0], to_nm=line_window[1], medium="air"
    )
    name = "H-beta" if line_window[0] < 500 else "H-alpha"
    centre = np.array([r["air_nm"] for r in res.lines])
    power = np.array([r["emissivity_w_m3_sr"] for r in res.lines])
    doppler = shapes.doppler_fwhm_nm(centre, 2000.0, 1.008)
    gauss = np.hypot(doppler, 0.04)
    grid = shapes.make_grid(*line_window, 0.002)
    y = shapes.synthetic_spectrum(grid, centre, power, gauss, float(stark.stark_fwhm_nm(name, ne0)))
    y, unc = _noisy(y, 3)
    peaks = service.find_peaks(content=_spectrum_file(grid, y, unc), source="balmer.csv", profile="voigt")
    main_peak = max(peaks.rows, key=lambda r: r["area"])
    result = service.diagnose(
        hstore,
        ["H I"],
        content=_csv([main_peak], service.PEAK_COLUMNS),
        source="p.csv",
        instrument_fwhm_nm=0.04,
        tgas_k=2000.0,
    )
    report = result.report
    assert report["ne_m3"] == pytest.approx(ne0, rel=0.10)
    assert name in report["ne_method"]
    assert report["ne_unc_m3"] > 0
    assert report["validity"]["lte_holds"] is None  # one line: no temperature, so no LTE verdict


def _lamp_pixels(hstore, seed):
    """Pixel spectrum of an invented H/D lamp: emission of H I and D I, mapped through TRUE."""
    p = np.arange(N_PIX, dtype=float)
    wl = calibration.evaluate(TRUE, p)
    y = np.zeros(N_PIX)
    for name, share in (("H I", 1.0), ("D I", 0.6)):
        res = hstore.emission(name, te_k=9000.0, ne_m3=1e20, tgas_k=400.0, from_nm=376.0, to_nm=720.0, medium="air")
        lam = np.array([r["air_nm"] for r in res.lines])
        power = np.array([r["rel_intensity"] for r in res.lines]) * share * 100.0
        y += shapes.synthetic_spectrum(p, np.interp(lam, wl, p), power, 3.2, 0.0)
    return p, _noisy(y + 2.0, seed, rel=0.005)


@pytest.mark.parametrize("seed", [1, 2])
def test_pixel_lamp_spectrum_of_h_and_d_is_calibrated_below_a_fifth_of_a_pixel(hstore, seed):
    p, (y, unc) = _lamp_pixels(hstore, seed)
    lamp = _spectrum_file(p, y, unc, axis="pixel")
    result = service.calibrate_lamp(
        hstore,
        content=lamp,
        source="lamp.csv",
        species=["H I", "D I"],
        degree=3,
        medium="air",
        from_nm=370.0,
        to_nm=730.0,
    )
    report = result.report
    assert report["rms_pixel"] < 0.2
    assert {r["spectrum"] for r in report["lines_used"]} == {"H I", "D I"}
    assert len(report["lines_used"]) >= 10
    assert set(report) >= {"degree", "coefficients", "rms_nm", "lines_used", "rejected"}
    assert set(report["lines_used"][0]) >= {"pixel", "line_nm", "residual_nm", "lower", "upper"}
    # the calibration applied to the same frame gives peak wavelengths on the true dispersion
    peaks = service.find_peaks(content=lamp, source="lamp.csv", calibration_content=json.dumps(report).encode())
    px = np.array([r["centre_axis"] for r in peaks.rows])
    got = np.array([r["peak_nm"] for r in peaks.rows])
    step = np.gradient(calibration.evaluate(TRUE, p))[px.astype(int)]
    assert np.max(np.abs(got - calibration.evaluate(TRUE, px)) / step) < 0.5


def test_medium_is_explicit_and_converted(hstore):
    x = np.linspace(655.0, 658.0, 601)
    y = 100 * np.exp(-0.5 * ((x - 656.47) / 0.01) ** 2) + np.random.default_rng(1).normal(0, 0.1, x.size)
    vac = service.find_peaks(content=_spectrum_file(x, y, medium="vacuum"), source="v.csv")
    air = service.find_peaks(content=_spectrum_file(x, y, medium="vacuum"), source="v.csv", medium="air")
    assert vac.medium == "vacuum" and air.medium == "air"
    assert vac.rows[0]["peak_nm"] - air.rows[0]["peak_nm"] == pytest.approx(0.181, abs=0.002)  # n_air - 1 ~ 2.76e-4
    assert any("converted from vacuum to air" in w for w in air.warnings)
    with pytest.raises(PhysicsInputError, match="pixel axis"):
        service.find_peaks(content=b"pixel,intensity\n1,1\n2,2\n3,1\n", source="px.csv")


def test_nothing_is_written_until_commit(catalog):
    catalog.compute_hydrogenic("H I", n_max=3)
    before = len(catalog.dataset_rows())
    rows, _ = catalog.species_lines(LineQuery(spectrum="H I", from_nm=121.0, to_nm=122.0, medium="vacuum"))
    lyman = sorted(r["vacuum_nm"] for r in rows if r["lower"].startswith("1s"))
    content = _csv(
        [{"peak_nm": lam, "peak_unc_nm": 1e-5, "medium": "vacuum"} for lam in lyman],
        ("peak_nm", "peak_unc_nm", "medium"),
    )
    result = service.diagnose(catalog, ["H I"], content=content, source="lyman.csv", tolerance_nm=1e-5)
    assert len(result.measured_lines) == 2 and result.report["te_k"] is None
    assert len(catalog.dataset_rows()) == before
    report = service.commit_lines(catalog, result.measured_lines, sample="invented-cell", source="lyman.csv")
    assert report.lines == 2
    names = [d["name"] for d in catalog.dataset_rows()]
    assert len(names) == before + 1 and "invented-cell/lyman" in names
    with pytest.raises(InputFileError, match="no identified"):
        service.commit_lines(catalog, [], sample=None, source="x.csv")


def test_command_line(hstore, tmp_path):
    te = 15000.0
    res = hstore.emission(
        "H I",
        te_k=te,
        ne_m3=1e21,
        tgas_k=1000.0,
        from_nm=380.0,
        to_nm=670.0,
        medium="air",
        instrument_fwhm_nm=0.03,
        grid_points=58001,
    )
    y, unc = _noisy(res.spectrum, 11)
    spec = tmp_path / "syn.csv"
    spec.write_bytes(_spectrum_file(res.grid_nm, y, unc))
    runner = CliRunner()
    db = ["--db", hstore.url]
    out = runner.invoke(
        main,
        db
        + [
            "peaks",
            str(spec),
            "--format",
            "csv",
            "--output",
            str(tmp_path / "p.csv"),
            "--plot",
            str(tmp_path / "p.html"),
        ],
    )
    assert out.exit_code == 0, out.output
    header = [l for l in (tmp_path / "p.csv").read_text().splitlines() if not l.startswith("#")][0]
    assert header.split(",")[:7] == ["peak_nm", "peak_unc_nm", "medium", "fwhm_nm", "area", "area_unc", "snr"]
    assert "plotly" in (tmp_path / "p.html").read_text()[:200000]
    out = runner.invoke(main, db + ["identify", "H I", str(tmp_path / "p.csv"), "--tolerance", "0.01nm"])
    assert out.exit_code == 0, out.output
    out = runner.invoke(
        main,
        db
        + [
            "diagnose",
            "H I",
            str(tmp_path / "p.csv"),
            "--format",
            "json",
            "--instrument-fwhm",
            "0.03nm",
            "--tgas",
            "1000K",
            "--plot",
            str(tmp_path / "b.html"),
        ],
    )
    assert out.exit_code == 0, out.output
    report = json.loads(out.stdout)
    assert set(report) >= {"te_k", "te_unc_k", "ne_m3", "ne_unc_m3", "ne_method", "boltzmann", "validity", "warnings"}
    assert report["te_k"] == pytest.approx(te, rel=0.03)
    bad = tmp_path / "bad.csv"
    bad.write_text("wavelength_nm,intensity\n500,1\n499,2\n501,3\n")
    out = runner.invoke(main, db + ["peaks", str(bad)])
    assert out.exit_code == 1
    assert "bad.csv:4: wavelength_nm: the axis is not monotonic" in out.output
    out = runner.invoke(main, db + ["calibrate", str(spec), "--species", "H I", "--degree", "2", "--format", "json"])
    assert out.exit_code == 0, out.output
    assert "CAUTION" in out.stderr


def test_invented_demo_frames_end_to_end(hstore):
    # seed_data/demo/generate_spectra.py: the invented arc has Te 12000 K, ne 2e22 m-3, Tgas 3000 K, and the
    # invented spectrometer the dispersion [395.0, 0.0225, -2.0e-7, 4.0e-12]
    from pathlib import Path

    demo = Path(__file__).resolve().parents[2] / "seed_data" / "demo"
    cal = service.calibrate_lamp(hstore, demo / "frame-hd-lamp.csv", species=["H I", "D I"], from_nm=395.0, to_nm=665.0)
    assert cal.report["rms_pixel"] < 0.2 and len(cal.report["lines_used"]) == 10
    assert np.allclose(cal.report["coefficients"], [395.0, 0.0225, -2.0e-7, 4.0e-12], rtol=1e-3)
    arc = service.find_peaks(
        demo / "frame-h-arc.csv", calibration_content=json.dumps(cal.report).encode(), profile="voigt"
    )
    result = service.diagnose(
        hstore,
        ["H I"],
        content=_csv(arc.rows, service.PEAK_COLUMNS),
        source="arc.csv",
        instrument_fwhm_nm=0.06,
        tgas_k=3000.0,
    )
    assert result.report["te_k"] == pytest.approx(12000.0, rel=0.03)
    assert result.report["ne_m3"] == pytest.approx(2e22, rel=0.10)
    assert result.report["validity"]["lte_holds"] is False  # McWhirter asks ~1.9e23 m-3 for H I


def test_lines_output_is_a_file_levels_import_accepts(catalog, tmp_path):
    catalog.compute_hydrogenic("H I", n_max=3)
    rows, _ = catalog.species_lines(LineQuery(spectrum="H I", from_nm=121.0, to_nm=122.0, medium="vacuum"))
    lyman = sorted(r["vacuum_nm"] for r in rows if r["lower"].startswith("1s"))
    peaks_file = tmp_path / "lyman-peaks.csv"
    peaks_file.write_bytes(
        _csv(
            [{"peak_nm": lam, "peak_unc_nm": 1e-5, "medium": "vacuum", "area": 2.0} for lam in lyman],
            ("peak_nm", "peak_unc_nm", "medium", "area"),
        )
    )
    runner = CliRunner()
    db = ["--db", catalog.url]
    before = dataset_names_of(catalog)
    out = runner.invoke(
        main,
        db
        + [
            "diagnose",
            "H I",
            str(peaks_file),
            "--tolerance",
            "0.00001nm",
            "--lines-output",
            str(tmp_path / "lines.csv"),
        ],
    )
    assert out.exit_code == 0, out.output
    assert dataset_names_of(catalog) == before  # diagnose writes nothing
    out = runner.invoke(main, db + ["import", str(tmp_path / "lines.csv"), "--sample", "invented-cell"])
    assert out.exit_code == 0, out.output
    assert "imported 2 lines of H I" in out.output
    assert len(dataset_names_of(catalog)) == len(before) + 1


def dataset_names_of(catalog) -> list[str]:
    return sorted(d["name"] for d in catalog.dataset_rows())


HE_I_LEVELS = (  # INVENTED He I-like levels (energies rounded and shifted on purpose; not reference data)
    "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
    "He I,1s2,1S,0,0,0.01\n"
    "He I,1s.2s,3S,1,159000.0,0.01\n"
    "He I,1s.2p,3P°,1,169000.0,0.01\n"
    "He I,1s.3s,3S,1,183000.0,0.01\n"
    "He I,1s.3d,3D,2,186000.0,0.01\n"
    "He I,1s.4d,3D,2,191000.0,0.01\n"
)
#: invented A values of the invented He I lines, s-1
HE_I_A = {("1s.2p", "1s.3s"): 1.0e7, ("1s.2p", "1s.3d"): 7.0e7, ("1s.2p", "1s.4d"): 2.5e7, ("1s.2s", "1s.2p"): 1.0e7}
HE_I_LIMIT_CM1 = 198000.0  # invented


def test_saha_boltzmann_across_two_stages(catalog):
    from levels.notation import parse_spectrum
    from levels.physics.diagnostics import boltzmann
    from levels.store import database, queries
    from levels.store.schema import IonizationLimit

    catalog.compute_hydrogenic("He II", n_max=4)
    report = catalog.import_file("he1.csv", content=HE_I_LEVELS.encode(), source="he1.csv", dataset="invented He I")
    labels = {r["configuration"]: r["label"] for r in catalog.level_rows("He I")}
    energy = {r["configuration"]: r["energy_cm1"] for r in catalog.level_rows("He I")}
    lines = ["spectrum,lower,upper,wavelength_nm,medium,unc_nm,a_per_s"]
    for (lo, up), a in HE_I_A.items():
        lines.append(f"He I,{labels[lo]},{labels[up]},{1e7 / (energy[up] - energy[lo])!r},vacuum,0.001,{a}")
    catalog.import_file(
        "he1-lines.csv",
        content=("\n".join(lines) + "\n").encode(),
        source="he1-lines.csv",
        dataset="invented He I lines",
    )

    def work(session):
        ds = queries.require_dataset(session, report.dataset)
        species = queries.require_species(session, parse_spectrum("He I"))
        session.add(
            IonizationLimit(
                dataset_id=ds.id,
                species_id=species.id,
                energy_cm1=HE_I_LIMIT_CM1,
                unc_cm1=1.0,
                method="invented test value",
            )
        )

    database.run_in_transaction(catalog.engine, work)
    te, ne = 30000.0, 1e23
    c2 = 1.4387768775  # hc/k, cm K (CODATA, scipy.constants)
    peaks_rows = []
    for name, eion, shift in (("He I", 0.0, 0.0), ("He II", HE_I_LIMIT_CM1, boltzmann.saha_shift(te, ne))):
        rows, _ = catalog.species_lines(LineQuery(spectrum=name, from_nm=100.0, to_nm=800.0, medium="vacuum"))
        rows = [r for r in rows if r["a_per_s"]]
        by_pair: dict = {}
        for r in rows:  # blends: the fine-structure components of one nl pair
            key = (round(r["upper_cm1"], -2), round(r["lower_cm1"], -2))
            by_pair.setdefault(key, []).append(r)
        for comp in by_pair.values():
            ga = sum(r["a_per_s"] * r["g_upper"] for r in comp)
            eu = sum(r["a_per_s"] * r["g_upper"] * r["upper_cm1"] for r in comp) / ga
            lam = sum(r["a_per_s"] * r["g_upper"] * r["vacuum_nm"] for r in comp) / ga
            ln_y = 5.0 - (eu + eion) * c2 / te + shift
            spread = max(r["vacuum_nm"] for r in comp) - min(r["vacuum_nm"] for r in comp)
            peaks_rows.append(
                {
                    "peak_nm": lam,
                    "peak_unc_nm": 1e-4,
                    "medium": "vacuum",
                    "fwhm_nm": 2 * spread + 0.02,
                    "area": float(np.exp(ln_y) * ga / lam),
                    "area_unc": float(0.01 * np.exp(ln_y) * ga / lam),
                }
            )
    content = _csv(peaks_rows, ("peak_nm", "peak_unc_nm", "medium", "fwhm_nm", "area", "area_unc"))
    result = service.diagnose(catalog, ["He I", "He II"], content=content, source="he.csv", ne_m3=ne)
    out = result.report
    assert out["te_method"] == "Saha-Boltzmann plot of He I and He II"
    assert out["te_k"] == pytest.approx(te, rel=0.01)
    assert out["ne_method"] == "given"
    without_ne = service.diagnose(catalog, ["He I", "He II"], content=content, source="he.csv").report
    assert any("no electron density" in w for w in without_ne["warnings"])


def test_self_absorbed_multiplet_is_flagged(catalog):
    # INVENTED levels: an upper 3S1 level above a 3P° term of three J levels (one multiplet of three lines),
    # and a 3D level for a spread of upper energies; A values invented
    levels_csv = (
        "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
        "He I,1s2,1S,0,0,0.01\n"
        "He I,1s.2p,3P°,0,169000.0,0.01\n"
        "He I,1s.2p,3P°,1,169001.0,0.01\n"
        "He I,1s.2p,3P°,2,169003.0,0.01\n"
        "He I,1s.3s,3S,1,183000.0,0.01\n"
        "He I,1s.3d,3D,3,186000.0,0.01\n"
        "He I,1s.4d,3D,3,191000.0,0.01\n"
    )
    catalog.import_file("he1.csv", content=levels_csv.encode(), source="he1.csv", dataset="invented He I")
    rows = {(r["configuration"], r["j"]): r for r in catalog.level_rows("He I")}
    pairs = [
        (("1s.2p", "0"), ("1s.3s", "1"), 1.0e6),
        (("1s.2p", "1"), ("1s.3s", "1"), 3.0e6),
        (("1s.2p", "2"), ("1s.3s", "1"), 5.0e6),
        (("1s.2p", "2"), ("1s.3d", "3"), 6.0e7),
        (("1s.2p", "2"), ("1s.4d", "3"), 2.0e7),
    ]
    lines = ["spectrum,lower,upper,wavelength_nm,medium,unc_nm,a_per_s"]
    for lo, up, a in pairs:
        lam = 1e7 / (rows[up]["energy_cm1"] - rows[lo]["energy_cm1"])
        lines.append(f"He I,{rows[lo]['label']},{rows[up]['label']},{lam!r},vacuum,0.0001,{a}")
    catalog.import_file(
        "he1-lines.csv",
        content=("\n".join(lines) + "\n").encode(),
        source="he1-lines.csv",
        dataset="invented He I lines",
    )
    te, c2 = 20000.0, 1.4387768775
    peaks_rows = []
    for lo, up, a in pairs:
        g_u, e_u = rows[up]["g"], rows[up]["energy_cm1"]
        lam = 1e7 / (e_u - rows[lo]["energy_cm1"])
        area = float(np.exp(3.0 - e_u * c2 / te) * g_u * a / lam)
        if (lo, up) == (("1s.2p", "2"), ("1s.3s", "1")):
            area *= 0.6  # the strongest line of the multiplet, self-absorbed
        peaks_rows.append(
            {"peak_nm": lam, "peak_unc_nm": 1e-5, "medium": "vacuum", "area": area, "area_unc": 0.01 * area}
        )
    content = _csv(peaks_rows, ("peak_nm", "peak_unc_nm", "medium", "area", "area_unc"))
    out = service.diagnose(catalog, ["He I"], content=content, source="he.csv", tolerance_nm=1e-4).report
    assert any("self-absorbed" in w and "1s.3s 3S" in w for w in out["warnings"]), out["warnings"]
    peaks_rows[2]["area"] /= 0.6
    peaks_rows[2]["area_unc"] /= 0.6
    clean = service.diagnose(
        catalog,
        ["He I"],
        content=_csv(peaks_rows, ("peak_nm", "peak_unc_nm", "medium", "area", "area_unc")),
        source="he.csv",
        tolerance_nm=1e-4,
    ).report
    assert not any("self-absorbed" in w for w in clean["warnings"])
    assert clean["te_k"] == pytest.approx(te, rel=1e-3)
