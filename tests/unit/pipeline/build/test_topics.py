"""Per-topic and agenda-standardised series, and pairs of groups, through a real store and build.

Simulated bodies (the behaviour is built in, so the expected direction is known beforehand):

* two groups whose voting on each topic never changes, while the share of the divisive topic
  rises from 20 % to 80 % of the agenda: the raw group modularity must rise, the standardised
  series must stay flat within its intervals, and the divisive topic's own modularity must stay
  high throughout;
* every ballot on one topic: the standardised series equals the raw one exactly
  (direct standardisation to a population's own make-up gives its crude rate);
* three groups where only A and C drift apart: the pair series must name A|C.
"""

import csv

import numpy as np
import pandas as pd
import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.compute import BuildOptions
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.report.export import export_frame
from blocwatch.pipeline.store.database import Store

YEARS = range(2001, 2007)


def _write_body(path, groups: dict[str, int], ballots_by_year, vote):
    """One CSV: ``ballots_by_year[year]`` = [(ballot_id, topic)], ``vote(rng, group, topic,
    year, ballot_side)`` → 'yes' / 'no'."""
    rng = np.random.default_rng(7)
    members = [(f"{g}{i:02d}", g) for g, n in groups.items() for i in range(n)]
    with open(path, "w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(["ballot_id", "date", "member_id", "vote", "group", "topic"])
        for year in YEARS:
            for k, (ballot, topic) in enumerate(ballots_by_year[year]):
                side = rng.integers(2)  # which way the first group leans on this ballot
                day = f"{year}-{1 + k % 12:02d}-{1 + k // 12:02d}"
                for member, group in members:
                    out.writerow([ballot, day, member, vote(rng, group, topic, year, side),
                                  group, topic])


def _agenda_shift(year: int) -> list[tuple[str, str]]:
    share = 0.2 + 0.12 * (year - 2001)  # 0.20 … 0.80 of 80 ballots are divisive
    n_div = int(round(80 * share))
    return [(f"{year}-{k:03d}", "budget" if k < n_div else "roads") for k in range(80)]


def _shift_vote(rng, group, topic, year, side):
    if topic == "budget":  # along group lines, 10 % defection, the same every year
        lean = side if group == "L" else 1 - side
        return ["yes", "no"][lean if rng.random() > 0.1 else 1 - lean]
    return ["yes", "no"][int(rng.random() < 0.5)]  # roads: no group pattern at all


@pytest.fixture(scope="module")
def shifted(tmp_path_factory):
    folder = tmp_path_factory.mktemp("shift")
    _write_body(folder / "v.csv", {"L": 12, "R": 12}, {y: _agenda_shift(y) for y in YEARS},
                _shift_vote)
    store = Store(folder / "s.duckdb")
    ingest_files(store, [folder / "v.csv"], body="Shift")
    build(store, options=BuildOptions(bootstrap=60, permutations=0, expensive_replicates=0))
    frame = export_frame(store, "metrics", body="Shift")
    trends = export_frame(store, "trends", body="Shift")
    store.close()
    return frame, trends


def _series(frame, subset, metric="group_modularity"):
    rows = frame[(frame["subset"] == subset) & (frame["metric"] == metric)]
    return rows.sort_values("period_start").reset_index(drop=True)


def test_agenda_shift_raises_raw_but_not_standardised(shifted):
    frame, _ = shifted
    raw = _series(frame, "all")
    std = _series(frame, "agenda-standardised")
    assert len(raw) == len(std) == len(YEARS)
    assert raw["value"].iloc[-1] - raw["value"].iloc[0] > 0.1  # the raw series rises
    assert np.all(np.diff(raw["value"]) > -0.02)  # (and does not fall back on the way)
    # flat within its intervals: every two periods' intervals overlap, and the first and
    # last values each lie inside the other's interval
    assert std["low"].max() <= std["high"].min() + 0.02, std[["value", "low", "high"]]
    first, last = std.iloc[0], std.iloc[-1]
    assert first["low"] <= last["value"] <= first["high"]
    assert last["low"] <= first["value"] <= last["high"]
    assert abs(std["value"].iloc[-1] - std["value"].iloc[0]) < \
        0.5 * abs(raw["value"].iloc[-1] - raw["value"].iloc[0])
    divisive = _series(frame, "topic:budget")
    # high throughout: near 0.32, the group modularity of two equal groups agreeing 0.82
    # within and 0.18 across (10 % defection: 0.9² + 0.1²), and steady
    assert (divisive["value"] > 0.25).all()
    assert divisive["value"].min() > 0.8 * divisive["value"].max()
    assert (divisive["value"] > raw["value"]).all()
    assert (_series(frame, "topic:roads")["value"] < divisive["value"]).all()


def test_costly_families_per_topic_tell_the_divisive_topic_apart(shifted):
    # Built in: on 'budget' members vote their group's line (10 % defection), on 'roads' at
    # random. So each period the budget ballots alone place members in their group almost
    # perfectly (separability near 1, communities equal to the groups), the roads ballots no
    # better than chance (1/2 for two groups; ARI about 0). Planted-truth bounds, not fits.
    frame, _ = shifted
    sep_b = _series(frame, "topic:budget", "separability")["value"]
    sep_r = _series(frame, "topic:roads", "separability")["value"]
    ari_b = _series(frame, "topic:budget", "community_group_ari")["value"]
    ari_r = _series(frame, "topic:roads", "community_group_ari")["value"]
    assert len(sep_b) == len(ari_r) == len(YEARS)
    assert (sep_b > 0.9).all() and (ari_b > 0.8).all()
    assert (sep_r < 0.8).all() and (ari_r < 0.3).all()
    assert (_series(frame, "topic:budget", "silhouette")["value"]
            > _series(frame, "topic:roads", "silhouette")["value"]).all()
    # The standardised series has agreement only: no costly family there.
    std = frame[frame["subset"] == "agenda-standardised"]
    assert not std["metric"].isin(["separability", "silhouette", "community_group_ari"]).any()


def test_costly_topic_intervals_use_the_capped_replicates(tmp_path):
    # 25 replicates, the costly families capped at 20 (the fewest that give an interval,
    # metrics.uncertainty.intervals.MIN_REPLICATES): their per-topic rows carry intervals too.
    ballots = {y: [(f"{y}-{k:03d}", "budget" if k % 2 else "roads") for k in range(40)]
               for y in YEARS}
    _write_body(tmp_path / "v.csv", {"L": 8, "R": 8}, ballots, _shift_vote)
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [tmp_path / "v.csv"], body="Capped")
        build(store, options=BuildOptions(bootstrap=25, permutations=0,
                                          expensive_replicates=20))
        frame = export_frame(store, "metrics", body="Capped")
    rows = frame[(frame["subset"] == "topic:budget") & (frame["metric"] == "separability")]
    assert len(rows) == len(YEARS) and rows["low"].notna().all()
    assert (rows["low"] <= rows["high"]).all()


def test_every_estimate_lies_in_its_interval_or_says_why(shifted):
    frame, _ = shifted
    rows = frame[frame["subset"] != "all"].dropna(subset=["value", "low", "high"])
    assert not rows.empty
    inside = (rows["low"] <= rows["value"] + 1e-9) & (rows["value"] <= rows["high"] + 1e-9)
    assert (inside | rows["note"].str.contains("outside its bootstrap interval")).all()


def test_trends_carry_the_subset_column(shifted):
    _, trends = shifted
    rows = trends[trends["metric"] == "group_modularity"].set_index("subset")
    assert {"all", "agenda-standardised", "topic:budget", "topic:roads"} <= set(rows.index)
    assert rows.loc["all", "mk_z"] > 0 and rows.loc["all", "mk_p"] < 0.05  # raw: rising
    assert rows.loc["agenda-standardised", "mk_p"] > 0.05  # standardised: no trend found


def test_one_topic_standardised_equals_raw_exactly(tmp_path):
    ballots = {y: [(f"{y}-{k:03d}", "budget") for k in range(30)] for y in YEARS}
    _write_body(tmp_path / "v.csv", {"L": 8, "R": 8}, ballots, _shift_vote)
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [tmp_path / "v.csv"], body="One")
        build(store, options=BuildOptions(bootstrap=0, permutations=0))
        frame = export_frame(store, "metrics", body="One")
    for metric in ("group_modularity", "ei_index", "cross_group_share"):
        raw = _series(frame, "all", metric)["value"].to_numpy()
        std = _series(frame, "agenda-standardised", metric)["value"].to_numpy()
        assert len(raw) == len(YEARS)
        np.testing.assert_array_equal(std, raw)


def _drift_vote(rng, group, topic, year, side):
    """A and B always vote alike; C votes with them in 2001 and drifts away from A only."""
    lean_ab = side
    drift = 0.12 * (year - 2001)  # share of ballots on which C opposes A's side
    if group in ("A", "B"):
        lean = lean_ab
    else:
        lean = 1 - lean_ab if rng.random() < drift else lean_ab
    if group == "B" and rng.random() < 0.15:
        lean = 1 - lean
    return ["yes", "no"][lean if rng.random() > 0.05 else 1 - lean]


def test_pair_series_finds_the_pair_that_drifted(tmp_path):
    ballots = {y: [(f"{y}-{k:03d}", "") for k in range(40)] for y in YEARS}
    _write_body(tmp_path / "v.csv", {"A": 6, "B": 6, "C": 6}, ballots, _drift_vote)
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [tmp_path / "v.csv"], body="Three")
        build(store, options=BuildOptions(bootstrap=0, permutations=0))
        trends = export_frame(store, "trends", body="Three")
    pairs = trends[trends["metric"] == "pair_agreement"].set_index("subset")
    assert set(pairs.index) == {"pair:A|B", "pair:A|C", "pair:B|C"}
    steepest = pairs["slope"].idxmin()
    assert steepest == "pair:A|C"
    assert pairs.loc["pair:A|C", "mk_p"] < 0.05
    assert pd.isna(pairs.loc["pair:A|B", "mk_p"]) or pairs.loc["pair:A|B", "mk_p"] > 0.05


def test_topic_row_with_a_flat_interval_says_it_shows_no_spread():
    # Issue 12 on the demo: 22 topic rows stored "communities 2 [2, 2]" with no note. A flat
    # interval is not certainty; an interval with width keeps its note as it was.
    from blocwatch.metrics.registry import MetricValue
    from blocwatch.pipeline.build.topics import FLAT_NOTE, _row

    flat = _row("topic:Harbour levies", "communities", MetricValue(2.0), np.full(30, 2.0), 19)
    assert flat[3] == flat[4] == 2.0 and flat[-1] == FLAT_NOTE
    assert "no spread" in FLAT_NOTE
    spread = _row("topic:Harbour levies", "communities", MetricValue(2.0),
                  np.r_[np.full(20, 2.0), np.full(10, 3.0)], 19)
    assert spread[-1] is None
