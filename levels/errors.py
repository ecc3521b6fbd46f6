"""Exception hierarchy of levels.

Every error the package raises on purpose is a :class:`LevelsError`. Subclasses
also inherit the matching built-in so callers can catch either.
"""

from __future__ import annotations

from dataclasses import dataclass


class LevelsError(Exception):
    """Base class of every error raised on purpose by levels."""


class NotationError(LevelsError, ValueError):
    """A spectrum, term, J value or configuration string could not be parsed."""


class QuantumNumberError(LevelsError, ValueError):
    """Quantum numbers violate a constraint (for example ``l >= n``)."""


class UnitError(LevelsError, ValueError):
    """A quantity string has no unit, an unknown unit or the wrong dimension."""


class PhysicsInputError(LevelsError, ValueError):
    """Physical input out of range (negative temperature, empty window, ...)."""


class StoreError(LevelsError, RuntimeError):
    """The store could not complete an operation."""


class NotFoundError(LevelsError, LookupError):
    """A species, dataset, sample or level asked for does not exist."""


class AlreadyExistsError(LevelsError, ValueError):
    """A dataset, sample or state with that identity already exists."""


class TooLargeError(LevelsError, ValueError):
    """A request would need more memory or storage than the stated limit."""


@dataclass(frozen=True)
class Problem:
    """One validation problem in an input file or form.

    Attributes
    ----------
    source : str
        File name (or ``"<form>"``, ``"<api>"``).
    line : int or None
        1-based physical line number in the file, ``None`` when not tied to a line.
    field : str or None
        Column or field name, ``None`` for whole-row or whole-file problems.
    message : str
        What is wrong, in words a user can act on.
    """

    source: str
    line: int | None
    field: str | None
    message: str

    def __str__(self) -> str:
        where = self.source
        if self.line is not None:
            where += f":{self.line}"
        if self.field:
            return f"{where}: {self.field}: {self.message}"
        return f"{where}: {self.message}"


class InputFileError(LevelsError, ValueError):
    """An input file (or form, or API body) failed validation; nothing was written.

    ``str(error)`` is the first problem on one line (``file:line: field: message``),
    followed by a count of further problems; :attr:`problems` lists all of them.
    """

    def __init__(self, problems: list[Problem]):
        if not problems:
            raise ValueError("InputFileError needs at least one problem")
        self.problems = list(problems)
        first = str(self.problems[0])
        more = len(self.problems) - 1
        super().__init__(first if more == 0 else f"{first} (and {more} more problem{'s' if more > 1 else ''})")

    @property
    def first(self) -> Problem:
        """The first problem found."""
        return self.problems[0]


class ReservedNameError(InputFileError):
    """A user dataset was given a name of the form the tool keeps for its own computed datasets.

    Names such as ``derived lines Na I A=23``, ``series limit Na I A=23``,
    ``hydrogenic C VI A=12`` and ``rates Fe II A=56`` are reserved: the tool finds
    its computed datasets by role and species, and a user dataset of such a name
    would be confused with one. The problem names the field that carried the name.
    """


class DatasetInUseError(LevelsError, ValueError):
    """A dataset cannot be replaced or deleted because rows of other datasets depend on it."""
