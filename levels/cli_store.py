"""Store maintenance commands of the ``levels`` command line (registered on :data:`levels.cli.main`).

Work in progress: filled in by the reliability work (check, export-store, import-store,
history, retract, restore).
"""

from __future__ import annotations
