"""Check a measured-lines file against the stored levels without writing it (the sample desk's preview).

The checks are exactly those of an import of the file (:func:`levels.service.imports.import_file` for a file
whose header has ``wavelength_nm``): the header and every row (:mod:`levels.io.records`), then, through
:func:`levels.service.lab.store_measured_lines`, the labels against the stored levels, the parity and J rules
of each line's multipole and its wavenumber against the Ritz value of its levels. They run in one write
transaction that is always rolled back, so a preview can never leave anything in the store.
"""

from __future__ import annotations

import secrets
from collections.abc import Sequence

from levels.errors import InputFileError, Problem
from levels.io import records as level_io
from levels.io.tables import read_delimited
from levels.service import lab
from levels.service.imports import checked_columns
from levels.store import queries


class _RolledBack(Exception):
    """Raised at the end of a checked dry run so that its transaction is rolled back."""


def check_line_file(catalog, content: bytes, source: str, *,
                    air_formula: str = "iau2000") -> tuple[Sequence[level_io.LineRecord], list[Problem]]:
    """(records, problems) of a measured-lines file, checked as its import would check it; nothing written.

    Parameters
    ----------
    catalog : levels.catalog.Catalog
        The store whose levels the lines must name.
    content : bytes
        The file's bytes.
    source : str
        The file name used in every problem.
    air_formula : str
        Air formula for air wavelengths (the import's default).

    Returns
    -------
    (list of LineRecord, list of Problem)
        The records when there is no problem; otherwise no records and every problem found.
    """
    try:
        table = read_delimited(content, source=source)
        rows = checked_columns(table, level_io.LINE_FILE_COLUMNS, level_io.LINE_FILE_REQUIRED)
        records = level_io.validate_lines(rows, source=source)
    except InputFileError as exc:
        return [], list(exc.problems)

    def work(session) -> None:
        ds = queries.create_dataset(session, name=f"preview {secrets.token_hex(8)}", kind="measured",
                                    author=catalog.actor, description="dry run of a lines file, rolled back")
        lab.store_measured_lines(session, records, ds.id, source, air_formula)
        raise _RolledBack

    try:
        catalog.write(work)
    except _RolledBack:
        return records, []
    except InputFileError as exc:
        return [], list(exc.problems)
    raise AssertionError("the dry run was not rolled back")  # pragma: no cover
