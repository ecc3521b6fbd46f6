"""The same level in several datasets: reported on import and in line lists, never refused.

A level's state within a species is its canonical configuration
(:func:`levels.notation.canonical_configuration`: the closed core written out, bracketed or left
out is one state), its term and J. Two user datasets may well hold the same state (two samples,
two papers); that is kept, and said:

* on import, :func:`import_duplicate_warnings` names the new dataset, the other dataset and the
  levels (a few by label, then a count);
* in a line list over several datasets, precedence takes each state from the first dataset that
  has it, so every line is listed once; :func:`precedence_note` says how many states were held
  by several of the datasets and which one was taken.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from sqlalchemy.orm import Session

from levels.errors import AlreadyExistsError
from levels.notation import format_j
from levels.store import queries

#: level labels a warning names before it gives only a count
SHOWN_LEVELS = 5


def import_duplicate_warnings(session: Session, dataset_id: int, dataset_name: str, source: str,
                              species_ids: Iterable[int] | None = None) -> list[str]:
    """Warnings for the levels of a newly written dataset whose state another user dataset already holds.

    One warning per (species, other dataset): ``"<source>: 2 levels of K I in the new dataset 'b' are
    the same states as levels of dataset 'a' (same configuration with the closed core written out,
    bracketed or left out, same term and J): '4s 2S1/2' = '[Ar].4s 2S1/2', ...; both are kept, and
    line lists take each state from the first dataset in precedence"``.
    """
    ids = None if species_ids is None else list(species_ids)
    rows = queries.same_state_levels(session, dataset_id, species_ids=ids)
    groups: dict[tuple[str, str], list[tuple[str, str]]] = {}
    for species, new_label, old_label, other, *_ in rows:
        groups.setdefault((species, other), []).append((new_label, old_label))
    warnings = []
    for (species, other), pairs in groups.items():
        unique = list(dict.fromkeys(pairs))
        shown = ", ".join(repr(a) if a == b else f"{a!r} = {b!r}" for a, b in unique[:SHOWN_LEVELS])
        more = f" and {len(unique) - SHOWN_LEVELS} more" if len(unique) > SHOWN_LEVELS else ""
        count = len({a for a, _ in unique})
        warnings.append(
            f"{source}: {count} level{'s' if count != 1 else ''} of {species} in the new dataset {dataset_name!r} "
            f"{'are the same states as levels' if count != 1 else 'is the same state as a level'} of dataset "
            f"{other!r} (same configuration with the closed core written out, bracketed or left out, same term "
            f"and J): {shown}{more}; both are kept, and line lists take each state from the first dataset in "
            "precedence")
    return warnings


def states_in_several(session: Session, species_id: int, dataset_ids: Sequence[int]) -> list[tuple]:
    """(state configuration, term, two_j, number of datasets) of the states several of ``dataset_ids`` hold."""
    return queries.states_in_several_datasets(session, species_id, dataset_ids)


def precedence_note(species_name: str, states: Sequence[tuple], chosen_names: Sequence[str]) -> str | None:
    """One sentence for a line list: how many states several datasets held, and that each is listed once.

    None when no state is held twice.

    >>> note = precedence_note("K I", [("[Ar].4s", "2S", 1, 2)], ["k-cell/a", "k-cell/b"])
    >>> note[:61]
    'K I: 1 state is held by several datasets (e.g. [Ar].4s 2S1/2)'
    >>> note[61:]
    "; each is listed once, from the first of 'k-cell/a', 'k-cell/b' that holds it (precedence)"
    """
    if not states:
        return None
    examples = ", ".join(f"{c} {t}{'' if j is None else format_j(j)}" for c, t, j, _ in states[:3])
    count = len(states)
    order = ", ".join(repr(n) for n in chosen_names)
    return (f"{species_name}: {count} state{'s are' if count != 1 else ' is'} held by several datasets "
            f"(e.g. {examples}); each is listed once, from the first of {order} that holds it (precedence)")


def line_list_notes(session: Session, species, chosen: Sequence) -> list[str]:
    """The line list's note on states held by several of the ``chosen`` datasets (empty when none).

    ``species`` is the store's species row, ``chosen`` the datasets in precedence order.
    """
    ids = [d.id for d in chosen]
    states = states_in_several(session, species.id, ids)
    if not states:
        return []
    holding = queries.species_counts(session, ids).get(species.id, {}).get("datasets", set())
    names = [d.name for d in chosen if d.name in holding]
    note = precedence_note(species.name, states, names)
    return [note] if note else []


def refuse_same_state_twice(session: Session, dataset_id: int, dataset_name: str) -> None:
    """Raise :class:`~levels.errors.AlreadyExistsError` when the dataset now holds one state twice.

    For levels added to an existing dataset (the schema's unique constraint compares the configuration as
    given, so ``4s`` added beside ``[Ar].4s`` would pass it); the caller's transaction then rolls back.
    """
    twice = queries.states_twice_in_dataset(session, dataset_id)
    if twice:
        species, config, term, two_j = twice[0]
        shown = f"{config} {term}{'' if two_j is None else format_j(two_j)}"
        raise AlreadyExistsError(f"dataset {dataset_name!r} already holds the state {shown} of {species} "
                                 "(the closed core written out, bracketed or left out is one state); nothing was "
                                 "added")
