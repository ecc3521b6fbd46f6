"""Optional compilation of the scalar loop kernels with numba.

The radial recurrences (:mod:`levels.physics.one_electron.radial`) and the Numerov
integration (:mod:`levels.physics.many_electron.numerov`) are short scalar
loops; numba compiles them (``njit(cache=True, nogil=True)``, cached on disk).
Without numba, or with the environment variable ``LEVELS_NO_JIT`` set to a
value other than ``0``, the same functions run as plain Python and the modules
use their numpy fallbacks.

Examples
--------
>>> from levels.physics.jit import COMPILED, load_jit
>>> COMPILED == (load_jit() is not None)
True
"""

from __future__ import annotations

import os
from collections.abc import Callable
from typing import Any

__all__ = ["load_jit", "JIT", "COMPILED", "maybe_jit"]


def load_jit() -> Callable[[Callable[..., Any]], Callable[..., Any]] | None:
    """``numba.njit(cache=True, nogil=True)`` when numba imports and ``LEVELS_NO_JIT`` is not set, else None."""
    if os.environ.get("LEVELS_NO_JIT", "").strip() not in ("", "0"):
        return None
    try:
        import numba
    except ImportError:  # pragma: no cover - numba is a declared dependency
        return None
    return numba.njit(cache=True, nogil=True)


JIT = load_jit()
#: True when the loop kernels are compiled (numba); False: Python loops and numpy fallbacks.
COMPILED = JIT is not None


def maybe_jit(func: Callable[..., Any]) -> Callable[..., Any]:
    """``func`` compiled by numba when available, else ``func`` itself."""
    return JIT(func) if JIT is not None else func
