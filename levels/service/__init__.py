"""The service floor: one module per unit of work on a store.

Front ends (the command line, the web site, the Python API) call these; the
modules here call :mod:`levels.store` for SQL, :mod:`levels.io` for files and
:mod:`levels.physics` for numbers. :class:`levels.catalog.Catalog` is the thin
façade over them (store plumbing and one delegating method per unit of work);
typed requests, reports and row columns are in :mod:`levels.service.contract`.
"""
