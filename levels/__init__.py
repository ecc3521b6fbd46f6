"""levels: a local atomic energy-level store and transition browser.

The package is layered (see DEVELOPERS.md):

* :mod:`levels.physics` - pure numpy/scipy functions, no database, no web;
* :mod:`levels.store` - the only code that speaks SQL (SQLAlchemy 2);
* :mod:`levels.io` - file readers and writers that validate every row;
* :mod:`levels.catalog` and :mod:`levels.service` - the service layer;
* :mod:`levels.cli`, :mod:`webui` and :mod:`levels.api` - the front ends.

From Python, ``levels.open_store(db)`` opens a store (see :mod:`levels.api`); it is
imported on first use, so ``import levels`` stays light.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

__all__ = ["__version__", "open_store"]

if TYPE_CHECKING:  # pragma: no cover
    from levels.api import open_store


def __getattr__(name: str) -> Any:
    if name == "open_store":
        # imported by name on first use: the package itself depends on no layer (see the import contracts)
        return importlib.import_module("levels.api").open_store
    raise AttributeError(f"module 'levels' has no attribute {name!r}")
