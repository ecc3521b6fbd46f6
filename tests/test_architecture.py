"""Arrows only point down: the import contracts of pyproject.toml ([tool.importlinter]) hold, and can fail."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _lint_imports(cwd: Path, pythonpath: Path) -> subprocess.CompletedProcess:
    """Run ``lint-imports`` (the import-linter command of this environment) on the tree at ``cwd``."""
    command = Path(sys.executable).with_name("lint-imports")
    env = {**os.environ, "PYTHONPATH": str(pythonpath)}
    return subprocess.run([str(command), "--no-cache"], cwd=cwd, env=env, capture_output=True, text=True,
                          timeout=120)


def test_import_contracts_hold():
    done = _lint_imports(ROOT, ROOT)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "0 broken" in done.stdout
    # every contract of the configuration was checked (six of them; a renamed one would show here)
    assert done.stdout.count(" KEPT") == 6, done.stdout


def test_a_wrong_import_is_caught(tmp_path):
    """A physics module that imports the store, in a copy of the tree, breaks the physics-floor contract."""
    ignore = shutil.ignore_patterns("__pycache__", "*.nbi", "*.nbc", "static", "templates")
    for package in ("levels", "webui"):
        shutil.copytree(ROOT / package, tmp_path / package, ignore=ignore)
    shutil.copy(ROOT / "pyproject.toml", tmp_path / "pyproject.toml")
    (tmp_path / "levels" / "physics" / "scratch_wrong.py").write_text(
        '"""Deliberately wrong: physics reaching up into the store."""\n\n'
        'from levels.store import queries  # noqa: F401\n',
        encoding="utf-8")
    done = _lint_imports(tmp_path, tmp_path)
    assert done.returncode != 0, done.stdout
    assert "levels.physics is not allowed to import levels.store" in done.stdout
    assert "levels.physics.scratch_wrong -> levels.store.queries" in done.stdout
