"""Types shared by the rate methods of many-electron species (``levels rates``).

The methods (one valence electron; open core plus one electron) take the
measured levels of one species as :class:`LevelInput` rows and return a
:class:`MethodResult`; the rates service stores the result as one computed
dataset.
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class LevelInput:
    """One stored level handed to a rate method.

    Attributes
    ----------
    level_id : int
        Store id of the level (rows of the result refer to it).
    label : str
        The level label as stored, e.g. ``"3p 2P°3/2"``.
    configuration : str or None
        Configuration text as stored (``"2p6.3p"``, ``"3p"``, ``"2p5(2P°3/2)3p"``).
    term : str or None
        Term as stored: LS (``"2P"``), or jK (``"2[5/2]"``).
    two_j : int or None
        2J, or None when J is not resolved.
    parity : int
        +1 or -1.
    energy_cm1 : float
        Energy above the ground level, cm-1.
    unc_cm1 : float or None
        Its uncertainty, cm-1.
    """

    level_id: int
    label: str
    configuration: str | None
    term: str | None
    two_j: int | None
    parity: int
    energy_cm1: float
    unc_cm1: float | None = None


@dataclass(frozen=True)
class LineRate:
    """A computed rate for the transition between two stored levels.

    ``a_rel_unc`` is the relative (1-sigma-like) uncertainty of A, f and S
    from the rule the method states in its docstring.
    """

    lower_id: int
    upper_id: int
    multipole: str
    wavenumber_cm1: float
    a_per_s: float
    a_rel_unc: float
    f_abs: float
    line_strength_au: float


@dataclass
class MethodResult:
    """What a rate method returns for one species (or one configuration group)."""

    method: str
    lines: list[LineRate] = field(default_factory=list)
    #: (level_id, reason) for levels the method could not treat
    skipped: list[tuple[int, str]] = field(default_factory=list)
    #: fitted parameters and choices, stored in the dataset's options
    parameters: dict = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)
    #: optional: level_id -> (lifetime_s, relative uncertainty) from the method's own lines (a method
    #: that computes every decay of a level fills it; the service may also sum A over all stored lines)
    lifetimes: dict[int, tuple[float, float]] = field(default_factory=dict)
