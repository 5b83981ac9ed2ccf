"""The member jackknife of small bodies: it runs below SMALL_BODY members only, its standard
error is the textbook one of the recomputed metrics, and the stored rows say it was used."""

from datetime import date

import numpy as np

from blocwatch.metrics import compute_all
from blocwatch.metrics.uncertainty.intervals import SMALL_BODY
from blocwatch.metrics.uncertainty.resampling import jackknife_se
from blocwatch.pipeline.build.compute import compute_period, period_input
from blocwatch.pipeline.build.jackknife import member_jackknife_se
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.periods import Period
from blocwatch.pipeline.options import BuildOptions
from tests.spatial_sim import spatial_votes


def _board(n, b, *, separation, seed=1):
    votes, _, groups = spatial_votes(n + n % 2, b, separation=separation, seed=seed)
    votes, groups = votes[:n], groups[:n]
    ids = np.array([f"m{i:02d}" for i in range(n)], dtype=object)
    return VoteMatrix("Small Board", Period(date(2030, 1, 1), date(2030, 12, 31), "2030"),
                      ids, ids, np.array([f"g{g}" for g in groups], dtype=object),
                      np.array([f"b{j}" for j in range(b)], dtype=object),
                      np.array([""] * b, dtype=object), votes)


OPTS = BuildOptions(bootstrap=30, permutations=0, expensive_replicates=20)


def test_jackknife_recomputes_without_each_member():
    vm = _board(9, 12, separation=1.5)
    se = member_jackknife_se(vm, vm.labels, OPTS, 0, ["group_modularity"], ["modularity"],
                             period_input)
    # The same se by hand: modularity of each eight-member body, then the jackknife formula.
    loo = []
    for i in range(9):
        part = vm.subset(np.arange(9) != i)
        loo.append(compute_all(period_input(part.votes, part.labels, OPTS, 0),
                               families=["modularity"])["group_modularity"].value)
    assert se["group_modularity"] == jackknife_se(loo) > 0


def test_larger_bodies_get_no_jackknife():
    vm = _board(SMALL_BODY, 12, separation=1.5)
    assert member_jackknife_se(vm, vm.labels, OPTS, 0, ["group_modularity"], ["modularity"],
                               period_input) == {}


def test_nine_member_board_rows_say_how_their_interval_was_made():
    # A 9-member board (12 ballots) as in issue 12: every stored interval either includes the
    # member jackknife or says why it cannot show the uncertainty; none is flat without a note.
    res = compute_period(_board(9, 12, separation=5.0), OPTS, "test")
    rows = res.metrics[np.isfinite(res.metrics["low"])]
    assert len(rows) >= 10
    for _, r in rows.iterrows():
        assert "only 9 members" in r["note"], r.to_dict()
        assert r["low"] - 1e-12 <= r["value"] <= r["high"] + 1e-12 \
            or "outside its interval" in r["note"], r.to_dict()
        if r["high"] - r["low"] <= 1e-12:
            assert "no spread" in r["note"], r.to_dict()
    assert rows["note"].str.contains("jackknife").any()
