"""levels: a local atomic energy-level store and transition browser.

The package is layered (see DEVELOPERS.md):

* :mod:`levels.physics` - pure numpy/scipy functions, no database, no web;
* :mod:`levels.store` - the only code that speaks SQL (SQLAlchemy 2);
* :mod:`levels.io` - file readers and writers that validate every row;
* :mod:`levels.catalog` - the service layer called by the CLI and the web site.
"""

__version__ = "0.1.0"

__all__ = ["__version__"]
