"""canonical configuration of each level, for recognising a state across datasets

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-04 19:45:00

Adds ``levels.state_configuration`` (``String(200)``, NULL allowed) and the index
``ix_levels_species_state`` on (species_id, state_configuration, term, two_j); then
fills the column of every stored level from its configuration and the species'
number of electrons: a closed core written out (``1s2.2s2.2p6.3s2.3p6.4s``),
bracketed (``[Ar].4s``) or left out (``4s`` of K I) gives the same text
(``[Ar].4s``). ``configuration`` keeps the form the data gave. A configuration
this revision cannot read stays NULL (read as "same as configuration").

The rule is frozen here as it was at this revision (the live rule is
``levels.notation.canonical_configuration``; ``tests/test_notation_identity.py``
checks that both agree on stored forms); a migration never changes with the code.
It reads only the stored form (dotted subshells, an optional bracketed core,
parent terms in parentheses glued to the subshell they follow).

SQLite: the column is added with ``ALTER TABLE ... ADD COLUMN`` (see 0002: no
table rebuild, which would cascade-delete every level and line).
"""

import re

import sqlalchemy as sa
from alembic import op

revision = '0004'
down_revision = '0003'
branch_labels = None
depends_on = None

L_LETTERS = "spdfghiklmnoqrtuvwxy"
_NE = ((1, 0, 2), (2, 0, 2), (2, 1, 6))
_AR = _NE + ((3, 0, 2), (3, 1, 6))
_KR = _AR + ((3, 2, 10), (4, 0, 2), (4, 1, 6))
_XE = _KR + ((4, 2, 10), (5, 0, 2), (5, 1, 6))
CORES = {"He": ((1, 0, 2),), "Ne": _NE, "Ar": _AR, "Kr": _KR, "Xe": _XE,
         "Rn": _XE + ((4, 3, 14), (5, 2, 10), (6, 0, 2), (6, 1, 6))}
_SHELL = re.compile(r"^([0-9]+)([a-z]|\[[0-9]+\])([0-9]*)(\(.*\))?$")
MADELUNG = tuple(sorted(((n, l) for n in range(1, 9) for l in range(n)), key=lambda nl: (nl[0] + nl[1], nl[0])))


def _pieces(text: str) -> list[str]:
    """Dotted subshells, a parent term glued to the next subshell split off after its ')'."""
    out = []
    for part in text.split("."):
        while ")" in part and not part.endswith(")"):
            head, _, part = part.partition(")")
            out.append(head + ")")
        if part:
            out.append(part)
    return out


def canonical(text: str, electrons: int) -> str | None:
    """The canonical form of a stored configuration (frozen copy of the rule at 0004), None if unreadable."""
    core = None
    rest = text.strip()
    match = re.match(r"^\[([A-Z][a-z])\]\.?", rest)
    if match:
        core = match.group(1)
        if core not in CORES:
            return None
        rest = rest[match.end():]
    shells = list(CORES[core]) if core else []
    parents: dict[int, str] = {}
    for piece in _pieces(rest):
        m = _SHELL.match(piece)
        if not m:
            return None
        letter = m.group(2)
        l = int(letter[1:-1]) if letter.startswith("[") else L_LETTERS.find(letter)
        if l < 0:
            return None
        shells.append((int(m.group(1)), l, int(m.group(3)) if m.group(3) else 1))
        if m.group(4):
            parents[len(shells) - 1] = m.group(4)
    written = sum(k for _, _, k in shells)
    if written > electrons:
        return None
    if written < electrons:
        taken = {(n, l) for n, l, _ in shells}
        inner, count = [], 0
        for n, l in MADELUNG:
            if count == electrons - written:
                break
            if (n, l) not in taken:
                inner.append((n, l, 4 * l + 2))
                count += 4 * l + 2
        if count == electrons - written:
            shells = inner + shells
            parents = {i + len(inner): p for i, p in parents.items()}
    lead = 0
    while lead < len(shells) and shells[lead][2] == 4 * shells[lead][1] + 2 and lead not in parents:
        lead += 1
    closed = sorted(shells[:lead], key=lambda s: (s[0], s[1]))
    best = None
    for name, core_shells in sorted(CORES.items(), key=lambda kv: -len(kv[1])):
        if set(core_shells) <= set(closed):
            best = name
            break
    kept = [s for s in closed if best is None or s not in set(CORES[best])]
    parts = [f"[{best}]"] if best else []
    glue = False
    for index, (n, l, k) in enumerate(kept + shells[lead:]):
        letter = L_LETTERS[l] if l < len(L_LETTERS) else f"[{l}]"
        shell = f"{n}{letter}{'' if k == 1 else k}"
        if glue:
            parts[-1] += shell
        else:
            parts.append(shell)
        original = index - len(kept) + lead
        glue = index >= len(kept) and original in parents
        if glue:
            parts[-1] += parents[original]
    return ".".join(parts)


def upgrade() -> None:
    conn = op.get_bind()
    if conn.dialect.name == "sqlite":
        op.execute("ALTER TABLE levels ADD COLUMN state_configuration VARCHAR(200)")
    else:
        op.add_column('levels', sa.Column('state_configuration', sa.String(length=200), nullable=True))
    op.create_index('ix_levels_species_state', 'levels', ['species_id', 'state_configuration', 'term', 'two_j'])
    electrons = {row.id: row.z - row.charge for row in conn.execute(sa.text("SELECT id, z, charge FROM species"))}
    rows = conn.execute(sa.text("SELECT DISTINCT species_id, configuration FROM levels")).all()
    updates = []
    for row in rows:
        value = canonical(row.configuration or "", electrons.get(row.species_id, 0))
        if value is not None and len(value) <= 200:
            updates.append({"s": value, "sp": row.species_id, "c": row.configuration})
    if updates:
        conn.execute(sa.text("UPDATE levels SET state_configuration = :s WHERE species_id = :sp "
                             "AND configuration = :c"), updates)


def downgrade() -> None:
    op.drop_index('ix_levels_species_state', table_name='levels')
    if op.get_bind().dialect.name == "sqlite":
        raise NotImplementedError("downgrading an SQLite store below 0004 is not supported; "
                                  "use 'levels export-store' / 'import-store' with the older version")
    op.drop_column('levels', 'state_configuration')
