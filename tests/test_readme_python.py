"""The README's "Use it from Python" example runs as written, and prints what physics says it should."""

import contextlib
import io
import re
from pathlib import Path

import pytest
import scipy.constants as sc

README = Path(__file__).resolve().parents[1] / "README.md"


def _example() -> str:
    text = README.read_text(encoding="utf-8")
    match = re.search(r"### Use it from Python\n.*?```python\n(.*?)```", text, re.S)
    assert match, "README has no 'Use it from Python' section with a python block"
    return match.group(1)


def test_readme_python_example_runs(tmp_path, monkeypatch):
    monkeypatch.delenv("LEVELS_DB", raising=False)
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(_example(), str(README), "exec"), {"__name__": "readme_example"})
    printed = out.getvalue().splitlines()
    assert len(printed) == 4, printed
    # strongest visible H I line: the 2p 2P°3/2 - 3d 2D5/2 component of Balmer alpha
    strongest = re.fullmatch(r"2p 2P°3/2 - 3d 2D5/2 (\d+\.\d+) nm", printed[0])
    assert strongest, printed[0]
    # Balmer alpha from the Rydberg formula with the reduced mass (CODATA via scipy.constants), in vacuum,
    # then the IAU air index (Morton 2000: n - 1 = 2.77e-4 near 656 nm, from memory; about 0.18 nm shorter)
    mu = sc.m_p / (sc.m_e + sc.m_p)
    vacuum_nm = 1e9 / (sc.Rydberg * mu * (1 / 4 - 1 / 9))
    assert float(strongest.group(1)) == pytest.approx(vacuum_nm / 1.000277, abs=0.01)
    assert printed[1] == "IAU standard air"
    # first excited level of H I: (3/4) R_inf h c mu/m_e in eV (fine structure and QED below 1e-4 eV)
    first_ev = 0.75 * sc.physical_constants["Rydberg constant times hc in eV"][0] * mu
    value, unit = printed[2].split()
    assert unit == "eV" and float(value) == pytest.approx(first_ev, abs=2e-4)
    assert re.fullmatch(r"\d+ lines; CIE x = 0\.\d{3}", printed[3]), printed[3]
