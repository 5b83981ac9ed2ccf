"""What the build stores for the report, read back: the toy roll call's hand-derived pair
agreement (tests/toy_rollcall.py), stored once and never recomputed by the report."""

import duckdb
import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.planner import stale_periods
from blocwatch.pipeline.errors import StoreError
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.options import AgreementOptions, BuildOptions
from blocwatch.pipeline.report.frames import report_frames
from blocwatch.pipeline.store import schema
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import period_edges
from tests import toy_rollcall as toy

# Every ballot counts (the hand values include the unanimous v3) and 4 shared ballots suffice.
HAND = {(toy.MEMBERS[i], toy.MEMBERS[j]): float(v) for (i, j), v in toy.AGREEMENT_PAIRS.items()}
# The build stores the graph rule's edge set; a threshold at the weakest hand value keeps every
# pair, so every hand value can be read back.
OPTS = BuildOptions(bootstrap=0, permutations=0, rule=f"threshold:{min(HAND.values())}",
                    agreement=AgreementOptions(min_shared=1, drop_unanimous=False))


@pytest.fixture()
def built(tmp_path):
    path = tmp_path / "toy.duckdb"
    with Store(path) as store:
        ingest_files(store, [toy.write_csv(tmp_path / "toy.csv")], body="Toy")
        build(store, options=OPTS)
    return path


def test_build_stores_every_pair_with_its_hand_value(built):
    with Store(built, read_only=True) as store:
        edges = period_edges(store, "Toy")
    got = {(a, b): v for a, b, v in edges[["member_a", "member_b", "agreement"]].values}
    assert got == pytest.approx(HAND)
    assert set(edges["n_pairs"]) == {len(HAND)}
    assert edges["agreement"].is_monotonic_decreasing  # strongest first


def test_weighted_rule_stores_the_equal_likelihood_ties(tmp_path):
    # Derived by hand from the toy's agreement: same-group pairs agree 1 or 3/4, cross-group
    # pairs 1/4 or 1/2 except A3–B3 (3/4). The cut at 1/2 puts one pair on the wrong side
    # (A3–B3 above it); a cut at 3/4 or above misplaces four same-group pairs, one below 1/2
    # at least two cross pairs. So the equal-likelihood ties are the pairs above 1/2: the six
    # within-group pairs and A3–B3.
    path = tmp_path / "w.duckdb"
    with Store(path) as store:
        ingest_files(store, [toy.write_csv(tmp_path / "toy.csv")], body="Toy")
        build(store, options=BuildOptions(bootstrap=0, permutations=0,
                                          agreement=OPTS.agreement))
        edges = period_edges(store, "Toy")
    got = {(a, b) for a, b in edges[["member_a", "member_b"]].values}
    assert got == {pair for pair, v in HAND.items() if v > 0.5}
    assert len(got) == 7 and set(edges["n_pairs"]) == {15}


def test_report_shows_the_stored_pairs_even_after_new_votes(built, tmp_path):
    """Votes loaded after the build change agreement, but the report draws what the build
    stored beside the figures (no recomputation with other data or options)."""
    extra = tmp_path / "extra.csv"
    extra.write_text("ballot_id,date,member_id,vote,group\n"
                     + "".join(f"v5,2020-03-30,{m},{'Y' if m != 'A1' else 'N'},{g}\n"
                               for m, g in zip(toy.MEMBERS, toy.GROUPS)))
    with Store(built) as store:
        ingest_files(store, [extra], body="Toy")
    with Store(built, read_only=True) as store:
        frames = report_frames(store)
    got = {(a, b): v for a, b, v in frames["edges"][["member_a", "member_b", "agreement"]].values}
    assert got == pytest.approx(HAND)


@pytest.mark.parametrize("version", [1, 2])
def test_an_older_store_is_migrated_and_its_periods_marked_for_recomputation(tmp_path, version):
    """A store from before pairs were stored (schema 1, or 2 with topics) is upgraded by the
    first writer; its periods then carry a fingerprint no build computes, so the planner reads
    them as changed instead of drawing pictures without pairs."""
    path = str(tmp_path / "old.duckdb")
    con = duckdb.connect(path)
    con.execute(schema._SCHEMA_V1)
    for step in range(1, version):
        con.execute(schema._MIGRATIONS[step])
    con.execute("INSERT INTO meta VALUES ('schema_version', ?)", [str(version)])
    con.execute("INSERT INTO periods VALUES ('Toy', '2020', DATE '2020-01-01', "
                "DATE '2020-12-31', 'abc', 1, 6, 4, 0)")
    con.close()
    with pytest.raises(StoreError, match="older than this blocwatch"):
        Store(path, read_only=True)  # a reader cannot migrate, and says how to upgrade
    with Store(path) as store:
        assert store.scalar("SELECT value FROM meta WHERE key = 'schema_version'") == \
            str(schema.SCHEMA_VERSION)
        assert store.rows("SELECT fingerprint, n_pairs FROM periods") == [
            (schema.PAIRS_NOT_STORED, None)]
        assert store.table("period_edges").empty


def test_a_period_built_before_pairs_were_stored_reads_as_changed(built):
    """The marker the migration writes is a fingerprint no build produces."""
    with Store(built) as store:
        store.execute("UPDATE periods SET fingerprint = ?", [schema.PAIRS_NOT_STORED])
        stale = stale_periods(store, OPTS, "Toy")
    assert [(s.body, s.period) for s in stale] == [("Toy", "2020")]
    assert all(s.reason == "changed" for s in stale)
