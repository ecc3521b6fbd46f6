"""The read cache: answers kept per store revision, every write seen."""

from levels.catalog import LineQuery
from levels.notation import parse_spectrum
from levels.service.readcache import ReadCache


def test_answers_are_kept_per_revision_and_an_older_revision_never_replaces_newer_ones(catalog):
    cache = ReadCache(catalog)
    built = []

    def build(tag):
        return lambda: built.append(tag) or tag

    first = cache.revision()
    assert cache.get("k", first, build("a")) == "a"
    assert cache.get("k", first, build("b")) == "a" and built == ["a"]
    catalog.compute_hydrogenic("H I", n_max=2)  # a write: a new revision
    second = cache.revision()
    assert second > first
    assert cache.get("k", second, build("c")) == "c"
    # a request that read the revision before the write gets a fresh answer, and the kept one stays
    assert cache.get("k", first, build("d")) == "d"
    assert cache.get("k", second, build("e")) == "c"
    assert built == ["a", "c", "d"]


def test_species_lines_follow_writes(catalog):
    cache = ReadCache(catalog)
    catalog.compute_hydrogenic("H I", n_max=3)
    lines = cache.species_lines(parse_spectrum("H I"), cache.revision())
    assert len(lines) == catalog.line_rows(LineQuery(spectrum="H I"))[1] > 0
    catalog.compute_hydrogenic("H I", n_max=4)  # replaces the computed dataset
    again = cache.species_lines(parse_spectrum("H I"), cache.revision())
    assert len(again) > len(lines)
