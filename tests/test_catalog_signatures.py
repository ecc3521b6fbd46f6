"""The :class:`levels.catalog.Catalog` façade declares what its service functions declare, and passes it on.

Every public method that delegates to a function of :mod:`levels.service` (the explicit map
:data:`DELEGATES`) has no ``*args`` / ``**kwargs`` and the same parameters (names, kinds, defaults, in order)
as its service function after that function's ``catalog`` parameter. Two service functions take free
keywords, which the façade spells out: :func:`levels.service.datasets.create_sample` (the
``SAMPLE_CONDITION_FIELDS``, default None) and :func:`levels.service.emission.discharge_emission` (the keywords
of :func:`levels.service.emission.compute_emission` that it does not fill itself). A parameter added to a
service function and forgotten in the façade fails :func:`test_facade_declares_the_service_parameters`.
"""

from __future__ import annotations

import ast
import inspect
import textwrap
from collections.abc import Callable

import pytest

from levels.catalog import Catalog
from levels.service import computed, datasets, emission, imports, lab, lines, species
from levels.service.contract import SAMPLE_CONDITION_FIELDS

#: public method of Catalog -> the service function it delegates to
DELEGATES: dict[str, Callable] = {
    "species_rows": species.species_rows,
    "species_row": species.species_row,
    "level_rows": species.level_rows,
    "line_rows": lines.line_rows,
    "species_lines": lines.species_lines,
    "recompute_lines": lines.recompute_lines,
    "line_record": lines.line_record,
    "dataset_info": datasets.dataset_info,
    "dataset_rows": datasets.dataset_rows,
    "create_sample": datasets.create_sample,
    "sample_rows": datasets.sample_rows,
    "compute_hydrogenic": computed.compute_hydrogenic,
    "add_levels": imports.add_levels,
    "preview_levels": imports.preview_levels,
    "import_file": imports.import_file,
    "import_line_records": imports.import_line_records,
    "import_dataset": imports.import_dataset,
    "import_level_records": imports.import_level_records,
    "fit_limit": lab.fit_and_store_limit,
    "optimize_levels": lab.optimize_dataset,
    "identify_peaks": lab.identify_peaks,
    "emission": emission.discharge_emission,
}

#: service functions that take no catalog (all their parameters are the method's)
NO_CATALOG = {"preview_levels"}

#: public members of Catalog that are the store's plumbing, not delegates (provenance keeps free-form extras)
PLUMBING = {"display_url", "close", "init", "check_ready", "write", "read", "provenance"}

FREE = (inspect.Parameter.VAR_KEYWORD, inspect.Parameter.VAR_POSITIONAL)


def _shape(params) -> list[tuple[str, inspect._ParameterKind, object]]:
    """(name, kind, default) of each parameter, in order."""
    return [(p.name, p.kind, p.default) for p in params]


def _passed_by_discharge_emission() -> set[str]:
    """The keywords discharge_emission gives compute_emission itself (read from its source)."""
    tree = ast.parse(textwrap.dedent(inspect.getsource(emission.discharge_emission)))
    calls = [node for node in ast.walk(tree) if isinstance(node, ast.Call)
             and isinstance(node.func, ast.Name) and node.func.id == "compute_emission"]
    assert len(calls) == 1, "discharge_emission should call compute_emission once"
    return {kw.arg for kw in calls[0].keywords if kw.arg is not None}


def _extra_keywords(method: str) -> list[inspect.Parameter]:
    """The keywords the façade declares for a service function's ``**kwargs`` (empty where it has none)."""
    kw = inspect.Parameter.KEYWORD_ONLY
    if method == "create_sample":
        return [inspect.Parameter(name, kw, default=None) for name in SAMPLE_CONDITION_FIELDS]
    if method == "emission":
        passed = _passed_by_discharge_emission()
        return [p.replace(kind=kw) for p in inspect.signature(emission.compute_emission).parameters.values()
                if p.name not in passed]
    return []


def expected_parameters(method: str) -> list[inspect.Parameter]:
    """The parameters the façade method should have after ``self``."""
    params = list(inspect.signature(DELEGATES[method]).parameters.values())
    if method not in NO_CATALOG:
        assert params[0].name == "catalog", f"{DELEGATES[method].__name__} should take the catalog first"
        params = params[1:]
    extra = _extra_keywords(method)
    if extra:
        params = [p for p in params if p.kind is not inspect.Parameter.VAR_KEYWORD] + extra
    return params


def facade_parameters(method: str) -> list[inspect.Parameter]:
    """The façade method's parameters after ``self``."""
    params = list(inspect.signature(getattr(Catalog, method)).parameters.values())
    assert params[0].name == "self"
    return params[1:]


def test_every_public_member_is_mapped():
    public = {name for name in vars(Catalog) if not name.startswith("_")}
    assert public == set(DELEGATES) | PLUMBING


@pytest.mark.parametrize("method", sorted(DELEGATES))
def test_facade_has_no_free_arguments(method):
    free = [p.name for p in facade_parameters(method) if p.kind in FREE]
    assert free == [], f"Catalog.{method} hides parameters behind {free}"


@pytest.mark.parametrize("method", sorted(DELEGATES))
def test_facade_declares_the_service_parameters(method):
    service = DELEGATES[method]
    assert _shape(facade_parameters(method)) == _shape(expected_parameters(method)), (
        f"Catalog.{method} and {service.__module__}.{service.__name__} disagree")


@pytest.mark.parametrize("method", sorted(DELEGATES))
def test_facade_passes_every_parameter_on(method, monkeypatch):
    """Each argument reaches the service function under its own name (a recorder stands in for it)."""
    service = DELEGATES[method]
    real = inspect.signature(service)
    calls: list[tuple[tuple, dict]] = []
    monkeypatch.setattr(inspect.getmodule(service), service.__name__,
                        lambda *args, **kwargs: calls.append((args, kwargs)))
    catalog = object.__new__(Catalog)  # no store: the recorder never touches it
    given = {p.name: object() for p in facade_parameters(method)}
    getattr(catalog, method)(**given)
    assert len(calls) == 1
    bound = real.bind(*calls[0][0], **calls[0][1]).arguments
    if method not in NO_CATALOG:
        assert bound.pop("catalog") is catalog
    for p in real.parameters.values():
        if p.kind is inspect.Parameter.VAR_KEYWORD:
            bound.update(bound.pop(p.name, {}))
    assert bound.keys() == given.keys()
    wrong = [name for name, value in given.items() if bound[name] is not value]
    assert wrong == [], f"Catalog.{method} does not pass {wrong} on unchanged"


def test_the_emission_model_options_are_found():
    # the free keywords of discharge_emission are compute_emission's population model options; this guards
    # the source reading above (an empty list would make the emission check vacuous)
    names = [p.name for p in _extra_keywords("emission")]
    assert "model" in names and "loss_rate_per_s" in names
    assert "te_k" not in names and "spectrum_name" not in names


def test_create_sample_leaves_unset_conditions_out(monkeypatch):
    calls: list[dict] = []
    monkeypatch.setattr(datasets, "create_sample", lambda catalog, name, **conditions: calls.append(conditions))
    object.__new__(Catalog).create_sample("cell-1", gas_fill="Ne", pressure_pa=0.0)
    assert calls == [{"gas_fill": "Ne", "pressure_pa": 0.0}]  # a zero is given; None is "not given"
