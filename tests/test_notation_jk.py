"""jK (Racah) level labels: terms like 2[5/2], parent terms in configurations, import and display."""

from pathlib import Path

import pytest

from levels.errors import InputFileError, NotationError
from levels.io.records import read_levels_file, validate_level
from levels.notation import (
    JKTerm,
    format_configuration,
    format_term,
    jk_term_problem,
    label_pattern_to_regex,
    level_label,
    parse_configuration,
    parse_jk_term,
    parse_level_term,
)

DEMO = Path(__file__).resolve().parent.parent / "seed_data" / "demo" / "sample-ne-glow.csv"


@pytest.mark.parametrize("text, two_k, parity, shown", [
    ("2[5/2]", 5, 1, "2[5/2]"), ("2[3/2]°", 3, -1, "2[3/2]°"), ("2[1/2]o", 1, -1, "2[1/2]°"),
    ("2[3]", 6, 1, "2[3]"), (" 2[7/2]* ", 7, -1, "2[7/2]°"),
])
def test_jk_terms_parse_and_format(text, two_k, parity, shown):
    term = parse_jk_term(text)
    assert (term.multiplicity, term.two_k, term.parity) == (2, two_k, parity)
    assert format_term(term) == shown == str(term)


@pytest.mark.parametrize("text", ["2[5/3]", "2[4/2]", "[5/2]", "2[x]", "2(5/2)", "2[27]"])
def test_malformed_jk_terms_are_refused(text):
    with pytest.raises(NotationError):
        parse_jk_term(text)


def test_level_term_dispatch_keeps_ls_terms():
    assert isinstance(parse_level_term("2[5/2]"), JKTerm)
    assert parse_level_term("3P°").L == 1
    assert parse_level_term("2[27]").L == 27          # beyond the letters: LS, as before
    assert parse_level_term("") is None


def test_jk_term_allows_j_of_k_plus_minus_half():
    term = parse_jk_term("2[5/2]")
    assert [tj for tj in range(8) if term.allows_two_j(tj)] == [4, 6]


@pytest.mark.parametrize("text, shown", [
    ("2p5(2P°3/2)3p", "2p5(2P°3/2)3p"), ("2p5(2Po1/2).3p", "2p5(2P°1/2)3p"), ("2p5 (2P°3/2) 4d", "2p5(2P°3/2)4d"),
    ("1s2.2s2.2p5(2P°3/2)3s", "1s2.2s2.2p5(2P°3/2)3s"), ("[Ar].3d10.4s2.4p5(2P°1/2)5s", "[Ar].3d10.4s2.4p5(2P°1/2)5s"),
    ("5d9(2D5/2)6s2.6p", "5d9(2D5/2)6s2.6p"),
])
def test_parent_terms_round_trip(text, shown):
    config = parse_configuration(text)
    assert format_configuration(config) == shown
    assert format_configuration(parse_configuration(shown)) == shown
    assert "(" not in format_configuration(config.without_parents())
    assert config.parity == config.without_parents().parity


@pytest.mark.parametrize("text, message", [
    ("2p5(2P3/2)3p", "wrong parity"), ("2p5(2P°5/2)3p", "impossible for the parent term"),
    ("2p5(1P°1)3p", "has the parent term 2P"), ("(2P°3/2)3p", "must follow a subshell"),
    ("2p5(2P°3/2", "not a subshell"), ("2p5(xy)3p", "not an LS term"),
])
def test_bad_parent_terms_are_refused(text, message):
    with pytest.raises(NotationError, match=message.replace("(", r"\(")):
        parse_configuration(text)


def test_jk_term_problems():
    assert jk_term_problem(parse_configuration("2p5(2P°3/2)3p"), parse_jk_term("2[5/2]")) is None
    assert "needs the parent term" in jk_term_problem(parse_configuration("2p5.3p"), parse_jk_term("2[5/2]"))
    assert "impossible for parent J = 1/2" in jk_term_problem(parse_configuration("2p5(2P°1/2)3p"),
                                                             parse_jk_term("2[5/2]"))
    assert "2s+1 = 2" in jk_term_problem(parse_configuration("2p5(2P°3/2)3p"), parse_jk_term("1[5/2]"))


def test_label_and_series_pattern():
    config = format_configuration(parse_configuration("2p5(2P°3/2)3p"))
    assert level_label(config, "2[5/2]", 6) == "2p5(2P°3/2)3p 2[5/2]3"
    regex = label_pattern_to_regex("2p5(2P°3/2)ns 2[3/2]°2")
    assert regex.match("2p5(2P°3/2)5s 2[3/2]°2").group("n") == "5"
    assert regex.match("2p5(2P°1/2)5s 2[3/2]°2") is None


def _row(**changes):
    row = {"spectrum": "Ne I", "configuration": "2p5(2P°3/2)3p", "term": "2[5/2]", "j": "3", "energy_cm1": "149657"}
    row.update(changes)
    return row


def test_record_of_a_jk_level():
    record, problems = validate_level(_row(), source="f.csv", line=2)
    assert problems == []
    assert record.label == "2p5(2P°3/2)3p 2[5/2]3"
    assert (record.configuration, record.term, record.two_j, record.parity) == ("2p5(2P°3/2)3p", "2[5/2]", 6, 1)
    assert record.multiplicity is None and record.big_l is None      # not an LS term: no LS Landé g
    other, _ = validate_level(_row(configuration="2p5(2P°1/2)3p", term="2[3/2]", j="1"), source="f.csv", line=3)
    assert other.state_key != record.state_key


@pytest.mark.parametrize("changes, field, message", [
    ({"term": "2[5/2]°"}, "term", "has odd parity"),
    ({"j": "1"}, "j", "J = 1 is impossible for the term 2[5/2]"),
    ({"configuration": "2p5.3p"}, "term", "needs the parent term"),
    ({"configuration": "2p5(2P°1/2)3p"}, "term", "K = 5/2 is impossible for parent J = 1/2"),
    ({"configuration": "2p5(2P°3/2)3p2", "j": "2"}, "term", "one outer electron"),
])
def test_bad_jk_rows_name_line_and_field(changes, field, message):
    record, problems = validate_level(_row(**changes), source="f.csv", line=7)
    assert record is None
    assert any(p.field == field and p.line == 7 and message in p.message for p in problems), problems


def test_demo_file_reads_and_is_marked_invented():
    text = DEMO.read_text(encoding="utf-8")
    assert text.startswith("# INVENTED DEMO DATA")
    assert "high voltage" in text.splitlines()[4]
    records = read_levels_file(DEMO)
    assert len(records) == 61
    jk = [r for r in records if "[" in r.term]
    assert len(jk) == 60 and len({r.label for r in records}) == 61


def test_demo_file_imports_into_the_store(catalog):
    report = catalog.import_file(DEMO, sample="ne-glow-3")
    del report
    rows = catalog.level_rows("Ne I")
    labels = {row["label"] for row in rows}
    assert "2p5(2P°3/2)3p 2[5/2]3" in labels and "2p6 1S0" in labels
    row = next(r for r in rows if r["label"] == "2p5(2P°1/2)3s 2[1/2]°1")
    assert (row["configuration"], row["term"], row["parity"]) == ("2p5(2P°1/2)3s", "2[1/2]°", -1)
    assert row["lande_g"] is None


def test_bad_jk_file_is_refused_whole(catalog, tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("spectrum,configuration,term,j,energy_cm1\nNe I,2p6,1S,0,0\n"
                    "Ne I,2p5.3s,2[3/2]°,2,134041.8\n", encoding="utf-8")
    with pytest.raises(InputFileError, match=r"bad.csv:3: term: jK term '2\[3/2\]°': a jK term needs the parent"):
        catalog.import_file(path)
    assert catalog.species_rows() == []


def test_levels_import_and_show_the_demo_file(store_url):
    from click.testing import CliRunner

    from levels.cli import main

    runner = CliRunner()

    def run(*args):
        return runner.invoke(main, ["--db", store_url, *args], catch_exceptions=False)

    assert run("init").exit_code == 0
    result = run("import", str(DEMO), "--sample", "ne-glow-3")
    assert result.exit_code == 0, result.output
    assert "imported 61 levels of Ne I" in result.output
    shown = run("show", "Ne I")
    assert shown.exit_code == 0
    # the table shows labels and configurations spaced (issue 18), the CSV keeps the stored form
    assert "2p5(2P°3/2) 3p 2[5/2]" in shown.output and "2p5(2P°3/2)3p" not in shown.output
    csv = run("show", "Ne I", "--format", "csv")
    assert csv.exit_code == 0 and ",2p5(2P°3/2)3p 2[5/2]" in csv.output
