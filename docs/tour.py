"""Regenerate the README tour from real output.

Every ```console block of README.md preceded by the line ``<!-- tour -->`` is run: its ``$ `` lines are
executed in order (all marked blocks share one temporary folder and one store, ``LEVELS_DB=lab.sqlite``),
and the block is rewritten with each command followed by what it printed on standard output. Lines wider
than :data:`WIDTH` characters are cut and end in `` ...``; output longer than :data:`MAX_LINES` lines
ends in one ``... (N more lines)`` line. Unmarked blocks are illustrations and stay as
they are.

    python docs/tour.py            # rewrite README.md in place
    python docs/tour.py --check    # exit 1 and print a diff when README.md differs from the real output

``tests/test_readme_tour.py`` runs the check.
"""

from __future__ import annotations

import difflib
import os
import shlex
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
README = ROOT / "README.md"
MARK = "<!-- tour -->"
#: widest line kept in a tour block (wider table rows are cut and end in " ...")
WIDTH = 118
#: most output lines kept per command (the rest is counted in one "... (N more lines)" line)
MAX_LINES = 16


def _run(command: str) -> str:
    """Run one ``levels ...`` command in-process and return its standard output."""
    from click.testing import CliRunner

    from levels.cli import main

    args = shlex.split(command, comments=True)
    if not args or args[0] != "levels":
        raise SystemExit(f"tour: only 'levels' commands can run, not {command!r}")
    result = CliRunner().invoke(main, args[1:], catch_exceptions=False)
    if result.exit_code != 0:
        raise SystemExit(f"tour: {command!r} failed ({result.exit_code}):\n{result.output}")
    here = os.getcwd()
    text = result.stdout
    for folder in {here, os.path.realpath(here)}:
        text = text.replace(folder + os.sep, "")  # the temporary folder's path would change on every run
    return text


def _shown(output: str) -> list[str]:
    """The lines of one command's output as the README shows them (cut to WIDTH, at most MAX_LINES)."""
    rows = [_cut(x) for x in output.rstrip("\n").split("\n")] if output.strip() else []
    if len(rows) > MAX_LINES:
        rows = rows[:MAX_LINES] + [f"... ({len(rows) - MAX_LINES} more lines)"]
    return rows


def _cut(line: str) -> str:
    line = line.rstrip()
    return line if len(line) <= WIDTH else line[: WIDTH - 4].rstrip() + " ..."


def render(text: str) -> str:
    """README text with every marked console block rewritten from real output."""
    lines = text.split("\n")
    out: list[str] = []
    i = 0
    old_cwd, old_db = os.getcwd(), os.environ.get("LEVELS_DB")
    with tempfile.TemporaryDirectory(prefix="levels-tour-") as tmp:
        (Path(tmp) / "seed_data").symlink_to(ROOT / "seed_data")
        os.chdir(tmp)
        os.environ["LEVELS_DB"] = "lab.sqlite"  # as the tour exports it (relative to the tour folder)
        try:
            while i < len(lines):
                out.append(lines[i])
                if lines[i].strip() == MARK and i + 1 < len(lines) and lines[i + 1].startswith("```console"):
                    out.append(lines[i + 1])
                    i += 2
                    while i < len(lines) and not lines[i].startswith("```"):
                        if lines[i].startswith("$ "):
                            command = lines[i][2:]
                            out.append(lines[i])
                            if not command.startswith("export "):
                                out.extend(_shown(_run(command)))
                        i += 1
                    if i < len(lines):
                        out.append(lines[i])
                i += 1
        finally:
            os.chdir(old_cwd)
            if old_db is None:
                os.environ.pop("LEVELS_DB", None)
            else:
                os.environ["LEVELS_DB"] = old_db
    return "\n".join(out)


def main(argv: list[str]) -> int:
    text = README.read_text(encoding="utf-8")
    new = render(text)
    if "--check" in argv:
        if new != text:
            sys.stdout.writelines(difflib.unified_diff(text.splitlines(True), new.splitlines(True),
                                                       "README.md", "real output"))
            return 1
        return 0
    README.write_text(new, encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
