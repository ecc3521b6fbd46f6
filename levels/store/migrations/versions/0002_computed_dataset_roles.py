"""computed datasets identified by role and owner species

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-04 16:30:00

Adds ``datasets.role`` and ``datasets.owner_species_id`` (a unique index on the
pair, CHECKs that only computed datasets carry a role and that a role has an
owner). Then, for an existing store:

1. every computed dataset the tool made is given its role and owner species,
   from its method and name (the owner is the one species its rows belong to);
2. every other dataset whose name has a reserved form (``derived lines ...``,
   ``series limit ...``, ``hydrogenic ...``, ``rates ... A=<mass>``) - user data
   that the old code would have deleted on the next rebuild - is renamed
   ``user <old name>`` (``#<id>`` appended if taken), and the rename is written to
   the audit log. No row of any dataset is deleted.

SQLite: the columns are added with ``ALTER TABLE ... ADD COLUMN`` (no table
rebuild: recreating ``datasets`` while foreign keys are on would cascade-delete
every level and line).
"""

import datetime as dt
import json
import re
import unicodedata

import sqlalchemy as sa
from alembic import op

revision = '0002'
down_revision = '0001'
branch_labels = None
depends_on = None

ROLES = ("hydrogenic", "hydrogenic-nl", "derived-lines", "series-limit", "rates")
ROLE_CHECK = "role IS NULL OR role IN (" + ", ".join(f"'{r}'" for r in ROLES) + ")"
OWNER_CHECK = "role IS NULL OR (kind = 'computed' AND owner_species_id IS NOT NULL)"
RESERVED = re.compile(r"^(derived lines|series limit|hydrogenic|rates)\b.*\ba\s*=\s*\d+", re.IGNORECASE)
#: (name prefix, method of the old code or None for any, role, table whose rows name the species)
KNOWN = (
    ("derived lines ", "ritz-combination", "derived-lines", "lines"),
    ("series limit ", "extended-ritz-fit", "series-limit", "ionization_limits"),
    ("hydrogenic ", "hydrogenic-dirac-qed", None, "levels"),
    ("rates ", None, "rates", "lines"),
)


def _normal(name: str) -> str:
    return " ".join(unicodedata.normalize("NFKC", name).split())


def upgrade() -> None:
    conn = op.get_bind()
    if conn.dialect.name == "sqlite":
        op.execute(f"ALTER TABLE datasets ADD COLUMN role VARCHAR(32) CONSTRAINT ck_datasets_role_known "
                   f"CHECK ({ROLE_CHECK})")
        op.execute("ALTER TABLE datasets ADD COLUMN owner_species_id INTEGER "
                   "CONSTRAINT fk_datasets_owner_species_id_species REFERENCES species (id) ON DELETE RESTRICT "
                   f"CONSTRAINT ck_datasets_role_owner CHECK ({OWNER_CHECK})")
    else:
        op.add_column('datasets', sa.Column('role', sa.String(length=32), nullable=True))
        op.add_column('datasets', sa.Column('owner_species_id', sa.Integer(), nullable=True))
        op.create_foreign_key(op.f('fk_datasets_owner_species_id_species'), 'datasets', 'species',
                              ['owner_species_id'], ['id'], ondelete='RESTRICT')
        op.create_check_constraint(op.f('ck_datasets_role_known'), 'datasets', ROLE_CHECK)
        op.create_check_constraint(op.f('ck_datasets_role_owner'), 'datasets', OWNER_CHECK)
    op.create_index('uq_datasets_role_owner', 'datasets', ['role', 'owner_species_id'], unique=True)
    _fill_roles(conn)


def _fill_roles(conn) -> None:
    datasets = conn.execute(sa.text("SELECT id, name, kind, method FROM datasets ORDER BY id")).all()
    names = {row.name for row in datasets}
    taken: set[tuple[str, int]] = set()
    renames = []
    for row in datasets:
        name = _normal(row.name)
        role = owner = None
        if row.kind == "computed":
            for prefix, method, known_role, table in KNOWN:
                if not name.lower().startswith(prefix) or (method is not None and row.method != method):
                    continue
                if known_role is None:  # hydrogenic: with fine structure, or nl terms
                    known_role = "hydrogenic-nl" if name.endswith(" nl") else "hydrogenic"
                species = conn.execute(sa.text(f"SELECT DISTINCT species_id FROM {table} WHERE dataset_id = :d"),
                                       {"d": row.id}).scalars().all()
                if len(species) == 1 and (known_role, species[0]) not in taken:
                    role, owner = known_role, species[0]
                break
        if role is not None:
            taken.add((role, owner))
            conn.execute(sa.text("UPDATE datasets SET role = :r, owner_species_id = :o WHERE id = :d"),
                         {"r": role, "o": owner, "d": row.id})
        elif RESERVED.match(name):
            new = f"user {row.name}"
            if new in names:
                new = f"{new} #{row.id}"
            names.add(new)
            conn.execute(sa.text("UPDATE datasets SET name = :n WHERE id = :d"), {"n": new, "d": row.id})
            renames.append((row.id, row.name, new))
    audit = sa.table("audit_log", sa.column("at", sa.DateTime(timezone=True)), sa.column("actor", sa.String),
                     sa.column("action", sa.String), sa.column("target", sa.String), sa.column("detail_json", sa.Text))
    for dataset_id, old, new in renames:
        conn.execute(audit.insert().values(
            at=dt.datetime.now(dt.timezone.utc), actor="levels init (migration 0002)", action="rename-dataset",
            target=f"dataset {new}",
            detail_json=json.dumps({"dataset_id": dataset_id, "old_name": old, "new_name": new,
                                    "reason": "the old name has a form reserved for computed datasets"},
                                   sort_keys=True)))


def downgrade() -> None:
    if op.get_bind().dialect.name == "sqlite":
        # dropping these columns means rebuilding the datasets table, which with foreign keys on
        # would cascade-delete every level and line; restore an export-store file instead
        raise NotImplementedError("downgrading an SQLite store below 0002 is not supported; "
                                  "use 'levels export-store' / 'import-store' with the older version")
    op.drop_index('uq_datasets_role_owner', table_name='datasets')
    op.drop_constraint(op.f('ck_datasets_role_owner'), 'datasets', type_='check')
    op.drop_constraint(op.f('ck_datasets_role_known'), 'datasets', type_='check')
    op.drop_constraint(op.f('fk_datasets_owner_species_id_species'), 'datasets', type_='foreignkey')
    op.drop_column('datasets', 'owner_species_id')
    op.drop_column('datasets', 'role')
