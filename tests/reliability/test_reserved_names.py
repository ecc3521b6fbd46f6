"""Measured data under a computed dataset's name is never deleted by a rebuild (issue 19, item 1).

Every reserved name form is tried by every way a user names a dataset: ``--dataset``
(levels and lines files), the file's own name, the JSON API's ``name`` and the desk's
new-dataset field (both through the Catalog calls those front ends make). Named
explicitly, the name is refused with an error naming the field; taken from a file
name, the import goes ahead under a prefixed name. Then every rebuild path runs
(level import, line import, hydrogenic recompute, limit fit, retract/restore,
recompute_lines) and every row of the user's datasets must still be there, unchanged.

The levels below are INVENTED (round numbers near nothing in particular); they only
have to be valid and give a few E1 pairs.
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner
from sqlalchemy import select

from levels.cli import main
from levels.errors import InputFileError, ReservedNameError
from levels.io import records as level_io
from levels.service import maintenance
from levels.store import database
from levels.store.schema import Dataset, IonizationLimit, Level, Line

LEVEL_HEADER = "spectrum,configuration,term,j,energy_cm1,unc_cm1\n"
LINE_HEADER = "spectrum,lower,upper,wavelength_nm,medium,unc_nm\n"
# INVENTED levels of three species (energies in cm-1)
NA = "Na I,3s,2S,1/2,0,0.01\nNa I,3p,2P°,1/2,17000,0.01\nNa I,3p,2P°,3/2,17020,0.01\nNa I,4s,2S,1/2,25000,0.01\n" \
     "Na I,5s,2S,1/2,33000,0.01\nNa I,6s,2S,1/2,36000,0.01\nNa I,7s,2S,1/2,37600,0.01\n"
LI = "Li I,2s,2S,1/2,0,0.01\nLi I,2p,2P°,1/2,14900,0.01\nLi I,2p,2P°,3/2,14901,0.01\nLi I,3s,2S,1/2,27200,0.01\n"
C6 = "C VI,1s,2S,1/2,0,\nC VI,2p,2P°,1/2,3950000,\n"
# INVENTED measured line between the invented Na I levels above (1e7 / 17000 cm-1, vacuum)
NA_LINE = "Na I,3s 2S1/2,3p 2P°1/2,588.235294,vacuum,0.001\n"

RESERVED = ["derived lines Na I A=23", "series limit Na I A=23", "hydrogenic C VI A=12", "rates Na I A=23",
            "hydrogenic C VI A=12 nl", "Derived  Lines Na I a=23"]


def _file(tmp_path, name, header, body):
    path = tmp_path / name
    path.write_text(header + body, encoding="utf-8")
    return path


def _user_rows(catalog) -> dict:
    """Every row of every user dataset (no computed role), as comparable tuples."""

    def work(session):
        ids = [d.id for d in session.scalars(select(Dataset).where(Dataset.role.is_(None)))]
        out = {}
        for model in (Level, Line, IonizationLimit):
            cols = [c for c in model.__table__.columns]
            out[model.__tablename__] = sorted(tuple(r) for r in session.execute(
                select(*cols).where(model.dataset_id.in_(ids))))
        out["datasets"] = sorted((d.id, d.name, d.kind) for d in session.scalars(
            select(Dataset).where(Dataset.id.in_(ids))))
        return out

    return catalog.read(work)


@pytest.mark.parametrize("name", RESERVED)
def test_explicit_reserved_names_are_refused_naming_the_field(catalog, tmp_path, name):
    levels_file = _file(tmp_path, "na.csv", LEVEL_HEADER, NA)
    with pytest.raises(ReservedNameError) as info:
        catalog.import_file(levels_file, dataset=name)
    assert info.value.first.field == "dataset" and name in str(info.value)
    catalog.import_file(levels_file, dataset="na-ok")
    lines_file = _file(tmp_path, "lines.csv", LINE_HEADER, NA_LINE)
    with pytest.raises(ReservedNameError) as info:
        catalog.import_file(lines_file, dataset=name)
    assert info.value.first.field == "dataset"
    # the JSON API's POST /datasets and the desk's "new dataset" field call these
    records = level_io.validate_levels([(1, {"spectrum": "Na I", "configuration": "8s", "term": "2S", "j": "1/2",
                                             "energy_cm1": "38500"})], source="<api>", default_dataset=name)
    with pytest.raises(ReservedNameError) as info:
        catalog.import_dataset(records, [], name=name, source="<api>")
    assert info.value.first.field == "name"
    with pytest.raises(ReservedNameError) as info:
        catalog.import_level_records(records, source="<form>")
    assert info.value.first.field == "dataset"
    # the CLI says so and fails
    result = CliRunner().invoke(main, ["--db", catalog.url, "import", str(levels_file), "--dataset", name])
    assert result.exit_code != 0 and "dataset" in result.output and "computes and rebuilds" in result.output
    names = catalog.read(lambda s: [d.name for d in s.scalars(select(Dataset).where(Dataset.role.is_(None)))])
    assert names == ["na-ok"]


def test_user_data_under_reserved_file_names_survives_every_rebuild(catalog, tmp_path):
    # user datasets named by their files, one per reserved form, plus a Li I set named after Na I
    catalog.import_file(_file(tmp_path, "na-base.csv", LEVEL_HEADER, NA), dataset="na-base")
    made = []
    for name, body in (("derived lines Na I A=23", NA.replace("36000", "36001")),
                       ("series limit Na I A=23", NA.replace("36000", "36002")),
                       ("hydrogenic C VI A=12", C6), ("rates Na I A=23", NA.replace("36000", "36003"))):
        report = catalog.import_file(_file(tmp_path, name + ".csv", LEVEL_HEADER, body))
        assert report.dataset == "measured " + name and report.warnings
        made.append(report.dataset)
    cross = catalog.import_file(_file(tmp_path, "derived lines Na I A=23 (li).csv", LEVEL_HEADER, LI),
                                dataset="li cell")
    assert cross.dataset == "li cell" and cross.levels == 4  # an explicit name wins over the file's reserved-form name
    lines = catalog.import_file(_file(tmp_path, "derived lines Na I A=23.csv", LINE_HEADER, NA_LINE))
    assert lines.dataset == "measured derived lines Na I A=23 (2)"
    before = _user_rows(catalog)
    assert len(before["levels"]) == 7 + 3 * 7 + 2 + 4 and len(before["lines"]) == 1

    # every rebuild path
    catalog.import_file(_file(tmp_path, "na-more.csv", LEVEL_HEADER, "Na I,8s,2S,1/2,38500,0.02\n"), dataset="na-more")
    catalog.import_file(_file(tmp_path, "more-lines.csv", LINE_HEADER,
                              "Na I,3s 2S1/2,3p 2P°3/2,587.544065,vacuum,0.001\n"), dataset="na-more-lines")
    catalog.compute_hydrogenic("C VI", n_max=3)
    catalog.compute_hydrogenic("C VI", n_max=3)
    catalog.fit_limit("Na I", ["ns 2S1/2"], n_min=4)
    catalog.fit_limit("Na I", ["ns 2S1/2"], n_min=4)
    maintenance.retract_dataset(catalog, "na-more", reason="test")
    maintenance.restore_dataset(catalog, "na-more", reason="test")
    for spectrum in ("Na I", "Li I", "C VI"):
        catalog.recompute_lines(spectrum)
    after = _user_rows(catalog)
    for key in ("levels", "lines", "ionization_limits"):
        assert set(before[key]) <= set(after[key]), key
    assert set(before["datasets"]) <= set(after["datasets"])
    # the computed sets are found by role: one per role and species, named as before
    roles = catalog.read(lambda s: sorted((d.role, d.name) for d in s.scalars(
        select(Dataset).where(Dataset.role.is_not(None)))))
    assert ("derived-lines", "derived lines Na I A=23") in roles
    assert ("series-limit", "series limit Na I A=23") in roles
    assert ("hydrogenic", "hydrogenic C VI A=12") in roles
    assert maintenance.check(catalog).ok


def test_hydrogenic_recompute_keeps_measured_lines_on_its_levels(catalog, tmp_path):
    catalog.compute_hydrogenic("C VI", n_max=3)
    rows = catalog.level_rows("C VI")
    lo = next(r for r in rows if r["label"] == "1s 2S1/2")
    up = next(r for r in rows if r["label"] == "2p 2P°3/2")
    nm = 1e7 / (up["energy_cm1"] - lo["energy_cm1"])
    catalog.import_file(_file(tmp_path, "c6.csv", LINE_HEADER, f"C VI,1s 2S1/2,2p 2P°3/2,{nm!r},vacuum,1e-6\n"),
                        dataset="c6 lines")
    before = _user_rows(catalog)
    catalog.compute_hydrogenic("C VI", n_max=4)
    assert _user_rows(catalog)["lines"] == before["lines"]
    assert catalog.dataset_info("c6 lines")["lines"] == 1
    # a recomputation without a state those lines join is refused, nothing changes
    from levels.errors import DatasetInUseError

    with pytest.raises(DatasetInUseError):
        catalog.compute_hydrogenic("C VI", n_max=1)
    assert _user_rows(catalog)["lines"] == before["lines"]
    assert maintenance.check(catalog).ok


def test_reserved_name_refusal_is_an_input_error():
    assert issubclass(ReservedNameError, InputFileError)
    assert database.head_revision() >= "0002"
