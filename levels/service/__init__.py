"""The service floor: one module per unit of work on a store.

Front ends (the command line, the web site, the Python API) call these; the
modules here call :mod:`levels.store` for SQL, :mod:`levels.io` for files and
:mod:`levels.physics` for numbers. Older units of work still live in
``levels/catalog.py``, ``levels/lab.py``, ``levels/emission.py`` and
``levels/maintenance.py`` and move here one by one.
"""
