"""plain dataset names and a content hash of imported files

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-04 17:30:00

Adds ``datasets.content_sha256`` (the SHA-256 of an imported file's content, so
importing the same file again is recognised; NULL for existing datasets). Then
every dataset whose name common readers treat specially is renamed to a plain
form, and the rename is written to the audit log:

- a ``#`` (``pandas.read_csv(comment="#")``, the reader the exports' header
  calls for, cuts the rest of the line off): the old numbering suffix ``#<n>``
  becomes `` (<n>)``, any other ``#`` a space;
- a line break or other control character becomes a space, runs of white
  space one space, white space at either end is dropped;
- a leading ``=``, ``+``, ``-`` or ``@`` (spreadsheets run the cell as a
  formula) is dropped.

A plain name that is taken gets `` (<id>)`` appended. No row is deleted.

The rule is frozen here as it was at this revision (the live rule is
``levels.store.queries.dataset_name_problem``); a migration never changes with
the code.

SQLite: the column is added with ``ALTER TABLE ... ADD COLUMN`` (see 0002: no
table rebuild, which would cascade-delete every level and line).
"""

import datetime as dt
import json
import re
import unicodedata

import sqlalchemy as sa
from alembic import op

revision = '0003'
down_revision = '0002'
branch_labels = None
depends_on = None

FORMULA_STARTS = "=+-@"


def _control(c: str) -> bool:
    return unicodedata.category(c) in ("Cc", "Zl", "Zp")


def needs_rename(name: str) -> bool:
    """Whether ``name`` breaks the rule of this revision."""
    return (not name.strip() or name != name.strip() or "#" in name or any(_control(c) for c in name)
            or name[0] in FORMULA_STARTS)


def plain(name: str) -> str:
    """The plain form of ``name`` (frozen copy of ``queries.plain_dataset_name`` at 0003)."""
    text = re.sub(r"\s*#\s*(\d+)\s*$", r" (\1)", name)
    text = "".join(" " if c == "#" or _control(c) else c for c in text)
    text = " ".join(text.split())
    text = text.lstrip(FORMULA_STARTS + " ")
    return text or "dataset"


def upgrade() -> None:
    conn = op.get_bind()
    if conn.dialect.name == "sqlite":
        op.execute("ALTER TABLE datasets ADD COLUMN content_sha256 VARCHAR(64)")
    else:
        op.add_column('datasets', sa.Column('content_sha256', sa.String(length=64), nullable=True))
    _rename(conn)


def _rename(conn) -> None:
    datasets = conn.execute(sa.text("SELECT id, name FROM datasets ORDER BY id")).all()
    names = {row.name for row in datasets}
    renames = []
    for row in datasets:
        if not needs_rename(row.name):
            continue
        new = plain(row.name)
        if new in names:
            new = f"{new} ({row.id})"
        suffix = 2
        while new in names:  # "(id)" taken as well: count on
            new = f"{plain(row.name)} ({row.id}-{suffix})"
            suffix += 1
        names.discard(row.name)
        names.add(new)
        conn.execute(sa.text("UPDATE datasets SET name = :n WHERE id = :d"), {"n": new, "d": row.id})
        renames.append((row.id, row.name, new))
    audit = sa.table("audit_log", sa.column("at", sa.DateTime(timezone=True)), sa.column("actor", sa.String),
                     sa.column("action", sa.String), sa.column("target", sa.String), sa.column("detail_json", sa.Text))
    for dataset_id, old, new in renames:
        conn.execute(audit.insert().values(
            at=dt.datetime.now(dt.UTC), actor="levels init (migration 0003)", action="rename-dataset",
            target=f"dataset {new}",
            detail_json=json.dumps({"dataset_id": dataset_id, "old_name": old, "new_name": new,
                                    "reason": "the old name held characters CSV readers or spreadsheets "
                                              "treat specially ('#', a leading '=', '+', '-', '@', "
                                              "control characters)"}, sort_keys=True)))


def downgrade() -> None:
    if op.get_bind().dialect.name == "sqlite":
        raise NotImplementedError("downgrading an SQLite store below 0003 is not supported; "
                                  "use 'levels export-store' / 'import-store' with the older version")
    op.drop_column('datasets', 'content_sha256')
