"""Fuzzing every input path: importers, quantity parsers, notation parsers and the JSON API.

Property everywhere: the call succeeds, or raises a :class:`~levels.errors.LevelsError`
subclass with a message - never another exception - and a refused write leaves
the store exactly as it was (canonical dump compared). Inputs are random bytes,
random text, and structured rows that are nearly valid (each field drawn from a
vocabulary of good, borderline and bad values), which reach the deeper checks.
Examples are bounded so the file runs in well under a minute.
"""

from __future__ import annotations

import csv
import io
import math

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from levels.errors import LevelsError
from levels.io.records import LEVEL_COLUMNS, LINE_FILE_COLUMNS, PEAK_COLUMNS
from levels.notation import (
    format_configuration,
    format_j,
    format_term,
    parse_configuration,
    parse_j,
    parse_spectrum,
    parse_term,
)
from levels.store.database import dump
from levels.units import density_m3, parse_quantity, temperature_k, wavelength_nm

from .conftest import DEMO

STORE = dict(deadline=None, database=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                   HealthCheck.too_slow])
PURE = dict(deadline=None, database=None, max_examples=400)

# ----------------------------------------------------------------- vocabularies (good, borderline, bad)

SPECTRA = ["Li I", "Li I", "Na I", "H I", "He II", "C5+", "C+5", "Fe XXVI", "U XCII", "D I", "Xq I", "Li IV",
           "li i", "", " Na I ", "Li_I", "Li -1", "Li"]
CONFIGS = ["1s2.2s", "1s2.2p", "1s2.3d", "1s2.4f", "1s2.30s", "3s", "2p6", "1p", "1s3", "[He].2s", "[Xx].3s", "",
           "3s.3s", "99s", "2s2p", "1s2 2s", "2s0", "[He]"]
TERMS = ["2S", "2P°", "2Po", "2P*", "2D", "2F°", "3P", "1S", "", "2Q", "P2", "0S", "2[3]", "2J"]
JS = ["1/2", "3/2", "5/2", "7/2", "0", "1", "1.5", "-1/2", "5/3", "x", "", "1e2", "1/0", " 1/2 "]
ENERGIES = ["0", "0.0", "14903.66", "31283.08", "1e10", "1e11", "1.00001e11", "-1", "-0", "nan", "inf", "-inf",
            "1e400", "abc", "", "1_000", "0x10", "5e-324", "+1.5"]
NUMBERS = ["", "0", "0.01", "1", "-1", "nan", "inf", "1e300", "1e-320", "x", "2.5", "1e4"]
INTEGERS = ["", "0", "1", "2", "3", "4", "-1", "x", "1.0", "99999999999999999999"]
PARITIES = ["", "1", "-1", "+1", "even", "odd", "e", "o", "°", "2", "x"]
LABELS = ["1s2.2s 2S1/2", "1s2.2p 2P°1/2", "1s2.2p 2P°3/2", "1s2.3s 2S1/2", "1s2.3d 2D5/2", "1s2.3p 2P°3/2",
          "nope", "", "1s2.2s 2S1/2 "]
WAVELENGTHS = ["670.96", "670.791", "323.3", "0", "-5", "1e-4", "1e10", "1e9", "nan", "", "199.9", "x", "1e-3"]
MEDIA = ["air", "vacuum", "AIR", "Vacuum", "", "water"]
MULTIPOLES = ["", "E1", "M1", "E2", "e1", "E3", "2E1"]
VOCAB = {
    "spectrum": SPECTRA, "configuration": CONFIGS, "term": TERMS, "j": JS, "energy_cm1": ENERGIES,
    "unc_cm1": NUMBERS, "g": INTEGERS, "n": INTEGERS, "l": INTEGERS, "parity": PARITIES, "lifetime_s": NUMBERS,
    "lande_g": NUMBERS, "dataset": ["", "fuzz-set", "li/levels", "other"], "label": ["", "my label", "x" * 201],
    "lower": LABELS, "upper": LABELS, "wavelength_nm": WAVELENGTHS, "medium": MEDIA, "unc_nm": NUMBERS,
    "intensity": NUMBERS, "a_per_s": NUMBERS, "f_abs": NUMBERS, "multipole": MULTIPOLES, "note": ["", "ok", "a,b"],
    "peak_nm": WAVELENGTHS,
}
JUNK = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=12)


def _cell(column: str):
    return st.one_of(st.sampled_from(VOCAB.get(column, [""])), JUNK) if column in VOCAB else JUNK


@st.composite
def near_valid_csv(draw, known: tuple[str, ...], required: tuple[str, ...]) -> bytes:
    """A CSV with a (mostly) sensible header and rows of vocabulary values, sometimes broken on purpose."""
    optional = [c for c in known if c not in required]
    columns = list(required) + draw(st.lists(st.sampled_from(optional), unique=True, max_size=len(optional)))
    if draw(st.integers(0, 9)) == 0:
        columns.append(draw(st.sampled_from(["species", "energy", "", "j"])))  # unknown, empty or repeated
    if draw(st.integers(0, 9)) == 0 and len(columns) > 1:
        columns.remove(draw(st.sampled_from(columns)))  # a required column may go missing
    columns = draw(st.permutations(columns))
    rows = draw(st.lists(st.fixed_dictionaries({c: _cell(c) for c in columns}), min_size=0, max_size=6))
    out = io.StringIO()
    if draw(st.booleans()):
        out.write("# a comment line\n")
    writer = csv.writer(out, lineterminator=draw(st.sampled_from(["\n", "\r\n"])))
    writer.writerow(columns)
    for row in rows:
        cells = [row[c] for c in columns]
        if draw(st.integers(0, 14)) == 0:
            cells = cells[:-1]  # a ragged row
        writer.writerow(cells)
    text = out.getvalue()
    if draw(st.integers(0, 14)) == 0:
        text += '"unclosed quote,\n'
    return text.encode(draw(st.sampled_from(["utf-8", "utf-8", "utf-8", "utf-16", "latin-1"])), errors="replace")


ANY_BYTES = st.one_of(st.binary(max_size=600), st.text(max_size=300).map(lambda t: t.encode("utf-8")))


# ----------------------------------------------------------------- store fixtures and the property

@pytest.fixture
def seeded(catalog):
    """A store on each backend with the invented Li I levels (lines files refer to their labels)."""
    catalog.import_file(DEMO / "sample-li-cell.csv", sample="fuzz", dataset="li/levels")
    return catalog


def _import_or_refuse(catalog, data: bytes, name: str = "fuzz.csv") -> None:
    before = dump(catalog.engine)
    try:
        report = catalog.import_file(name, content=data, source=name)
    except LevelsError as exc:
        assert str(exc).strip(), "an error needs a message"
        assert "\n" not in str(exc)
        assert dump(catalog.engine) == before, "a refused import must not write anything"
        return
    info = catalog.dataset_info(report.dataset_id)
    assert info["levels"] == report.levels and report.levels + report.lines > 0
    if report.kind == "measured" and report.levels == 0:
        assert info["lines"] == report.lines


EXAMPLES = 60


@settings(max_examples=EXAMPLES, **STORE)
@given(data=ANY_BYTES)
@example(data=b"\xff\xfe" + "spectrum".encode("utf-16-le"))
@example(data=b"spectrum\rconfiguration\n")  # a bare carriage return in the header line
@example(data=b"spectrum,configuration,term,j,energy_cm1\nLi I,1s2.2s,2S,1/2,0\n\x00")
def test_random_bytes_into_the_importer(seeded, data):
    _import_or_refuse(seeded, data)


@settings(max_examples=EXAMPLES, **STORE)
@given(data=near_valid_csv(LEVEL_COLUMNS, ("spectrum", "configuration", "term", "j", "energy_cm1")))
@example(data=b"spectrum,configuration,term,j,energy_cm1\nLi I,1s2.40s,2S,1/2,1e11\n")
def test_near_valid_levels_files(seeded, data):
    _import_or_refuse(seeded, data)


@settings(max_examples=EXAMPLES, **STORE)
@given(data=near_valid_csv(LINE_FILE_COLUMNS, ("spectrum", "lower", "upper", "wavelength_nm", "medium", "unc_nm")))
@example(data="spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"
              "Li I,1s2.2s 2S1/2,1s2.2p 2P°1/2,670.96,vacuum,0.001\n".encode())
def test_near_valid_lines_files(seeded, data):
    _import_or_refuse(seeded, data)


@settings(max_examples=EXAMPLES, **STORE)
@given(data=st.one_of(ANY_BYTES, near_valid_csv(PEAK_COLUMNS, ("peak_nm",))),
       tolerance=st.sampled_from([0.005, 0.01, 1.0, 1e-9]))
def test_peaks_files(seeded, data, tolerance):
    before = dump(seeded.engine)
    try:
        rows = seeded.identify_peaks(["Li I"], None, tolerance_nm=tolerance, content=data, source="peaks.csv")
    except LevelsError as exc:
        assert str(exc).strip()
    else:
        assert isinstance(rows, list) and all("peak_nm" in r for r in rows)
    assert dump(seeded.engine) == before  # identifying never writes


# ----------------------------------------------------------------- quantities

UNITS = ["nm", "A", "Å", "angstrom", "um", "µm", "μm", "pm", "m", "mm", "eV", "keV", "meV", "K", "J", "cm-1",
         "cm^-1", "/cm", "m-3", "cm-3", "/cm3", "m^-3", "s", "ns", "Pa", "Torr", "bar", "", "km", "nM", "e V"]
NUMBER_TEXT = st.one_of(st.sampled_from(["656.3", "6563", "1.2", "1e18", "1e308", "1e-320", "-5", "0", "nan", "inf",
                                         "1e400", ".5", "5.", "+1", "1_0", "--1", "0x1f", "١٢"]),
                        st.floats(allow_nan=False, allow_infinity=False).map(repr))


@st.composite
def quantity_text(draw) -> str:
    space = draw(st.sampled_from(["", " ", "  ", "\t"]))
    return f"{draw(st.sampled_from(['', ' ']))}{draw(NUMBER_TEXT)}{space}{draw(st.sampled_from(UNITS))}"


@settings(**PURE)
@given(text=st.one_of(quantity_text(), st.text(max_size=30)),
       dimension=st.sampled_from(["length", "energy", "temperature", "density", "time", "pressure"]))
@example(text="1e308eV", dimension="temperature")
@example(text="1e308J", dimension="energy")
def test_quantity_parser(text, dimension):
    try:
        value = parse_quantity(text, dimension)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    # the documented contract: a non-finite value is refused, never returned
    assert isinstance(value, float) and math.isfinite(value), (text, value)


@settings(**PURE)
@given(text=st.one_of(quantity_text(), st.text(max_size=30)),
       parser=st.sampled_from([wavelength_nm, temperature_k, density_m3]))
@example(text="656.3nm", parser=wavelength_nm)
@example(text="1e308eV", parser=temperature_k)
def test_cli_quantity_helpers(text, parser):
    try:
        value = parser(text)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    assert isinstance(value, float) and math.isfinite(value), (text, value)


# ----------------------------------------------------------------- notation

ROMAN = ["I", "II", "III", "IV", "IX", "XXVI", "XCII", "C", "IIII", "VV", "XM", ""]
SYMBOLS = ["H", "D", "T", "He", "Li", "Fe", "U", "Og", "Xq", "h", "HE", "Uue", ""]


@st.composite
def spectrum_text(draw) -> str:
    symbol = draw(st.sampled_from(SYMBOLS))
    form = draw(st.integers(0, 3))
    if form == 0:
        return f"{symbol}{draw(st.sampled_from([' ', '_', '  ', '']))}{draw(st.sampled_from(ROMAN))}"
    charge = draw(st.sampled_from(["", "0", "1", "5", "25", "91", "92", "200", "99999999999999999999"]))
    sign = draw(st.sampled_from(["+", "-", ""]))
    return f"{symbol}{draw(st.sampled_from(['', '^']))}{charge}{sign}" if form == 1 else f"{symbol}{sign}{charge}"


@settings(**PURE)
@given(text=st.one_of(spectrum_text(), st.text(max_size=20)))
def test_spectrum_parser(text):
    try:
        spec = parse_spectrum(text)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    again = parse_spectrum(spec.name)
    assert (again.z, again.charge) == (spec.z, spec.charge) and 0 <= spec.charge < spec.z


@settings(**PURE)
@given(value=st.one_of(st.sampled_from(JS), st.text(max_size=12), st.floats(), st.integers(-10, 10**30),
                       st.fractions().map(lambda f: f"{f.numerator}/{f.denominator}")))
@example(value=float("nan"))
@example(value=float("inf"))
def test_j_parser(value):
    try:
        two_j = parse_j(value)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    assert isinstance(two_j, int) and two_j >= 0
    assert parse_j(format_j(two_j)) == two_j


@settings(**PURE)
@given(text=st.one_of(st.sampled_from(TERMS), st.text(max_size=10),
                      st.builds(lambda m, letter, odd: f"{m}{letter}{odd}", st.integers(0, 20),
                                st.sampled_from(list("SPDFGHIKLMNOQRTUJ") + ["[12]", "[0]", "s"]),
                                st.sampled_from(["", "°", "o", "*", "°°"]))))
def test_term_parser(text):
    try:
        term = parse_term(text)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    if term is None:
        assert not text.strip()
    else:
        assert parse_term(format_term(term)) == term


@st.composite
def configuration_text(draw) -> str:
    shells = draw(st.lists(st.builds(lambda n, l, k: f"{n}{l}{k}", st.integers(0, 12), st.sampled_from(list("spdfgh")),
                                     st.sampled_from(["", "1", "2", "6", "10", "14", "0", "15"])), max_size=5))
    core = draw(st.sampled_from(["", "[He].", "[Ne]", "[Ar] ", "[Xx]."]))
    return core + draw(st.sampled_from([".", " ", ". "])).join(shells)


@settings(**PURE)
@given(text=st.one_of(configuration_text(), st.sampled_from(CONFIGS), st.text(max_size=16)))
def test_configuration_parser(text):
    try:
        config = parse_configuration(text)
    except LevelsError as exc:
        assert str(exc).strip()
        return
    assert parse_configuration(format_configuration(config)) == config
    assert config.parity in (1, -1) and config.electrons >= 0


# ----------------------------------------------------------------- JSON API

TOKEN = "fuzz-token-0c1d"
JSON_VALUES = st.recursive(st.none() | st.booleans() | st.floats(allow_nan=False) | st.integers() | st.text(max_size=8),
                           lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=6), inner,
                                                                                         max_size=3), max_leaves=10)
LEVEL_FIELDS = ("spectrum", "label", "configuration", "term", "j", "parity", "energy_cm1", "unc_cm1", "g", "n", "l",
                "lifetime_s", "lande_g")


def _api_value(column: str):
    numeric = st.one_of(st.floats(allow_nan=False, width=64), st.integers(-5, 10**12))
    return st.one_of(_cell(column), numeric, st.none(), st.booleans(), st.just([1]))


@st.composite
def dataset_body(draw) -> dict:
    body = {}
    if draw(st.integers(0, 9)):
        body["name"] = draw(st.one_of(st.sampled_from(["fuzz-post", "li/levels", "", "x" * 201]), JUNK, st.integers()))
    for key in ("kind", "sample", "citation", "description"):
        if draw(st.booleans()):
            body[key] = draw(st.one_of(st.sampled_from(["measured", "imported", "computed", "", "cell"]), JUNK,
                                       st.none(), st.integers()))
    if draw(st.integers(0, 9)):
        fields = draw(st.lists(st.sampled_from(LEVEL_FIELDS + ("bogus",)), unique=True, min_size=3, max_size=8))
        base = ["spectrum", "configuration", "term", "j", "energy_cm1"] if draw(st.booleans()) else []
        keys = list(dict.fromkeys(base + fields))
        body["levels"] = draw(st.lists(st.fixed_dictionaries({k: _api_value(k) for k in keys}), max_size=4))
    if draw(st.integers(0, 19)) == 0:
        body["lines"] = [{"lower": "a"}]
    if draw(st.integers(0, 19)) == 0:
        body[draw(JUNK)] = draw(JSON_VALUES)
    return body


@pytest.fixture
def api(seeded, tmp_path):
    webui = pytest.importorskip("webui", reason="the web site is not in this tree")
    if not hasattr(webui, "create_app"):
        pytest.skip("webui.create_app does not exist yet")
    app = webui.create_app({"LEVELS_DB": seeded.url, "SECRET_KEY": "fuzz-secret", "LEVELS_API_TOKEN": TOKEN,
                            "TESTING": True, "LEVELS_INSTANCE_PATH": str(tmp_path / "instance"),
                            "LEVELS_UPLOAD_DIR": str(tmp_path / "uploads")})
    if not any(r.rule == "/api/v1/datasets" and "POST" in r.methods for r in app.url_map.iter_rules()):
        pytest.skip("POST /api/v1/datasets does not exist yet")
    yield seeded, app.test_client()
    app.extensions["levels"]["catalog"].close()


def _post_or_refuse(catalog, client, **request) -> None:
    before = dump(catalog.engine)
    response = client.post("/api/v1/datasets", headers={"Authorization": f"Bearer {TOKEN}"}, **request)
    assert response.status_code < 500, response.get_data(as_text=True)[:500]
    payload = response.get_json(silent=True)
    if response.status_code == 201:
        assert payload["dataset"]["levels"] >= 1
        return
    assert response.status_code in (400, 409, 413, 415, 422), response.status_code
    assert set(payload["error"]) >= {"code", "message", "field"} and payload["error"]["message"]
    assert dump(catalog.engine) == before


@settings(max_examples=EXAMPLES, **STORE)
@given(body=st.one_of(dataset_body(), JSON_VALUES))
@example(body={"name": "ok-post", "levels": [{"spectrum": "Li I", "configuration": "1s2.5s", "term": "2S", "j": "1/2",
                                               "energy_cm1": 39015.0}]})
def test_api_dataset_bodies(api, body):
    catalog, client = api
    _post_or_refuse(catalog, client, json=body)


@settings(max_examples=30, **STORE)
@given(data=ANY_BYTES,
       mimetype=st.sampled_from(["application/json", "text/plain", "application/x-www-form-urlencoded"]))
def test_api_raw_bodies(api, data, mimetype):
    catalog, client = api
    _post_or_refuse(catalog, client, data=data, content_type=mimetype)
