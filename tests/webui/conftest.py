"""Fixtures of the web tests, after the Flask tutorial: ``app``, ``client``, ``runner``.

The store (SQLite always, PostgreSQL too when LEVELS_TEST_POSTGRES_URL is set;
see tests/conftest.py) holds the invented Li I demo sample, invented lines
between its levels (written through the store layer, as the lines engine will),
and one dataset whose label and name carry HTML, to prove it is escaped.
"""

from __future__ import annotations

import re
import threading
import warnings
from pathlib import Path

import numpy as np
import pytest
from sqlalchemy import select

from levels.catalog import Catalog
from levels.physics.lines.air import vacuum_to_air
from levels.store import database, queries
from levels.store.schema import IonizationLimit, Level, Line

from webui import create_app, make_server, stop_server

from tests.conftest import BACKENDS

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "seed_data" / "demo" / "sample-li-cell.csv"
TOKEN = "test-token-3b9f1c2e"
SECRET = "test-secret-key"
XSS_LABEL = "<script>alert('x')</script>"
XSS_DATASET = "<b>xss-set</b>"
#: fixture value near the Li I ionization energy (from memory, about 43487 cm-1); only drawn, never checked
LI_LIMIT_CM1 = 43487.1
MULTI_ERROR_CSV = (
    "# invented rows, each with a different problem\n"
    "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
    "Li I,1s2.2s,2S,1/2,0,\n"
    "Li I,1s2.3d,2D,5/3,31283.1,0.1\n"          # J not a half-integer
    "Li I,1s2.3p,2P°,1/2,abc,0.1\n"             # energy not a number
    "Xq I,1s2.4s,2S,1/2,35012.0,0.1\n"          # unknown element
    "Li I,1s2.4p,2P°,1/2,36469.8,-1\n"          # negative uncertainty
    "Li I,1s2.4d,2P°,3/2,36623.4,0.1\n"         # term parity contradicts the configuration
).encode()
SCREENSHOTS = ROOT / "test-artifacts" / "screenshots"
#: the OS Chromium the real-browser tests drive (tests/webui/browser_fixtures.py)
CHROMIUM = "/usr/bin/chromium"


def insert_lines(catalog: Catalog, dataset_name: str, spectrum: str = "Li I", *, max_lines: int | None = None,
                 seed: int = 7) -> int:
    """Write invented lines between the levels of one dataset (test data, not physics).

    Pairs of opposite parity with |delta l| = 1 become E1 lines, same-parity pairs with
    |delta l| = 2 become E2 lines; the A values are invented (log-uniform 1e2..1e8 s-1).
    The wavenumber is the difference of the two stored energies; the air wavelength
    comes from the project's own conversion (levels.physics.lines.air), empty below 200 nm.
    """
    rng = np.random.default_rng(seed)

    def work(session):
        ds = queries.require_dataset(session, dataset_name)
        levels = session.scalars(select(Level).where(Level.dataset_id == ds.id).order_by(Level.energy_cm1)).all()
        rows = []
        for i, lower in enumerate(levels):
            for upper in levels[i + 1:]:
                if upper.energy_cm1 <= lower.energy_cm1 or lower.l is None or upper.l is None:
                    continue
                dl = abs(upper.l - lower.l)
                if lower.parity != upper.parity and dl == 1:
                    multipole = "E1"
                elif lower.parity == upper.parity and dl == 2:
                    multipole = "E2"
                else:
                    continue
                sigma = upper.energy_cm1 - lower.energy_cm1
                vac = 1e7 / sigma
                rows.append({
                    "dataset_id": ds.id, "species_id": lower.species_id, "lower_id": lower.id, "upper_id": upper.id,
                    "multipole": multipole, "wavenumber_cm1": sigma, "vacuum_nm": vac,
                    "air_nm": _air(vac),
                    "a_per_s": float(10 ** rng.uniform(2, 8)) if multipole == "E1" else float(10 ** rng.uniform(-2, 1)),
                    "f_abs": float(rng.uniform(1e-4, 0.5)), "line_strength_au": float(rng.uniform(1e-3, 50)),
                    "unc_nm": None, "medium": "", "note": "",
                })
        if max_lines is not None:
            rows = rows[:max_lines]
        queries.insert_rows(session, Line, rows)
        return len(rows)

    return database.run_in_transaction(catalog.engine, work)


def add_limit(catalog: Catalog, dataset_name: str, energy_cm1: float, spectrum: str = "Li I") -> None:
    """Store an ionization limit for a species in a dataset (test data, through the store layer)."""
    from levels.notation import parse_spectrum

    def work(session):
        ds = queries.require_dataset(session, dataset_name)
        species = queries.require_species(session, parse_spectrum(spectrum))
        session.add(IonizationLimit(dataset_id=ds.id, species_id=species.id, energy_cm1=energy_cm1, unc_cm1=0.5,
                                    method="test fixture"))

    database.run_in_transaction(catalog.engine, work)


def _air(vacuum_nm: float) -> float | None:
    if vacuum_nm < 200:
        return None  # vacuum-ultraviolet lines are quoted in vacuum (design, line-list columns)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # beyond 2000 nm the formula is extrapolated; fine for test data
        return float(vacuum_to_air(vacuum_nm))


def fill_store(catalog: Catalog) -> dict:
    """Write the shared test content; return facts the tests check against."""
    report = catalog.import_file(DEMO, sample="demo-1")
    n_lines = insert_lines(catalog, report.dataset)
    xss_csv = ("spectrum,configuration,term,j,energy_cm1,label\n"
               f"Li I,1s2.3s,2S,1/2,27206.1,\"{XSS_LABEL}\"\n"
               "Li I,1s2.3p,2P°,3/2,30925.6,\n").encode()
    xss = catalog.import_file("xss.csv", content=xss_csv, source="xss.csv", dataset=XSS_DATASET)
    insert_lines(catalog, XSS_DATASET)
    add_limit(catalog, report.dataset, LI_LIMIT_CM1)
    return {"demo_dataset": report.dataset, "demo_levels": report.levels, "demo_lines": n_lines,
            "xss_dataset_id": xss.dataset_id, "catalog": catalog}


@pytest.fixture
def store(catalog):
    """The test content in a fresh store of each backend (for tests that write)."""
    return fill_store(catalog)


def _backend_url(backend: str, folder: Path):
    """A fresh, empty store URL on ``backend`` (tests/conftest.py's helper, for other scopes)."""
    from tests.conftest import backend_url

    return backend_url(backend, folder)


@pytest.fixture(scope="module", params=BACKENDS)
def shared(request, tmp_path_factory):
    """One filled store per test module and backend, for tests that only read; with its app."""
    folder = tmp_path_factory.mktemp("webui-shared")
    with _backend_url(request.param, folder) as url:
        cat = Catalog(url, actor="pytest")
        cat.init()
        facts = fill_store(cat)
        application = create_app(make_config(url, folder))
        facts.update(app=application, url=url, backend=request.param)
        yield facts
        application.extensions["levels"]["catalog"].close()
        cat.close()


@pytest.fixture
def reader(shared):
    """A test client of the shared, read-only site."""
    return shared["app"].test_client()


def make_config(store_url: str, tmp_path: Path, **extra) -> dict:
    config = {"LEVELS_DB": store_url, "SECRET_KEY": SECRET, "LEVELS_API_TOKEN": TOKEN, "TESTING": True,
              "LEVELS_UPLOAD_DIR": str(tmp_path / "uploads"), "LEVELS_DESK_NEEDS_TOKEN": False,
              "LEVELS_INSTANCE_PATH": str(tmp_path / "instance")}
    config.update(extra)
    return config


@pytest.fixture
def app(store, store_url, tmp_path):
    """The site over the test store (CSRF on, API token set, desk open)."""
    application = create_app(make_config(store_url, tmp_path))
    yield application
    application.extensions["levels"]["catalog"].close()


@pytest.fixture
def client(app):
    return app.test_client()


@pytest.fixture
def runner(app):
    return app.test_cli_runner()


CSRF_RE = re.compile(r'name="csrf_token" value="([^"]+)"')


def csrf_token(client, path: str = "/desk/") -> str:
    """The CSRF token of a form page (the session cookie stays in the client)."""
    page = client.get(path)
    assert page.status_code == 200, page.status_code
    match = CSRF_RE.search(page.get_data(as_text=True))
    assert match, "no CSRF token on the page"
    return match.group(1)


class LiveServer:
    """The app under waitress on a free loopback port, in a thread."""

    def __init__(self, application):
        self.app = application
        self.server = make_server(application, "127.0.0.1", 0, threads=4, asyncore_loop_timeout=0.1)
        self.url = f"http://127.0.0.1:{self.server.effective_port}"
        self.thread = threading.Thread(target=self.server.run, daemon=True)

    def __enter__(self):
        self.thread.start()
        return self

    def __exit__(self, *exc):
        stop_server(self.server, self.thread)


def dataset_names(catalog: Catalog) -> list[str]:
    return [d["name"] for d in catalog.dataset_rows(include_retracted=True)]


def count_rows(catalog: Catalog, model) -> int:
    from sqlalchemy import func

    return catalog.read(lambda s: s.scalar(select(func.count()).select_from(model)))


@pytest.fixture(scope="module")
def browser():
    """Headless Chromium (Playwright over the OS browser), one per test module."""
    sync_api = pytest.importorskip("playwright.sync_api")
    with sync_api.sync_playwright() as playwright:
        chromium = playwright.chromium.launch(executable_path=CHROMIUM, args=[
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking"])
        yield chromium
        chromium.close()


@pytest.fixture
def page(browser):
    """A fresh tab; ``page.problems`` collects its script errors and console errors."""
    context = browser.new_context(viewport={"width": 1400, "height": 950}, accept_downloads=True)
    tab = context.new_page()
    tab.set_default_timeout(20_000)
    problems: list[str] = []
    tab.on("console", lambda m: problems.append(m.text) if m.type == "error" else None)
    tab.on("pageerror", lambda e: problems.append(str(e)))
    tab.problems = problems
    yield tab
    context.close()
