"""The README tour is real output: docs/tour.py reruns its marked console blocks and compares (issue 18, item 9)."""

import importlib.util
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


@pytest.mark.slow  # about 30 s: it builds the demo store and runs the tour's commands
def test_readme_tour_matches_real_output():
    spec = importlib.util.spec_from_file_location("levels_tour", ROOT / "docs" / "tour.py")
    tour = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(tour)
    text = tour.README.read_text(encoding="utf-8")
    assert text.count(tour.MARK) >= 3, "the tour's console blocks are no longer marked"
    rendered = tour.render(text)
    assert rendered == text, "README tour differs from the real output; run: python docs/tour.py"


def test_tour_cuts_wide_and_long_output():
    spec = importlib.util.spec_from_file_location("levels_tour", ROOT / "docs" / "tour.py")
    tour = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(tour)
    shown = tour._shown("x" * 300 + "\n" + "\n".join(str(i) for i in range(40)))
    assert len(shown) == tour.MAX_LINES + 1 and shown[-1].startswith("... (")
    assert len(shown[0]) <= tour.WIDTH and shown[0].endswith(" ...")
