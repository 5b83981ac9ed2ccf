"""The build's reads of stored ballots (pipeline/store/ballots.py), on a real DuckDB file.

Expected values are counted by hand from the toy roll call (tests/toy_rollcall.py: 6 members
in groups A and B, 4 ballots a year, every member votes on every ballot) and loaded for two
years, so a read for one year must see exactly half of the store.
"""

import datetime as dt

from blocwatch.pipeline.store.ballots import (
    ballot_date_range,
    ballot_dates,
    has_ballots,
    period_scale_ballots,
    period_scores,
    period_votes,
    topic_counts,
)
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy

Y2020 = (dt.date(2020, 1, 1), dt.date(2020, 12, 31))


def test_empty_store_has_no_ballots(tmp_path):
    with Store(tmp_path / "empty.duckdb") as store:
        assert not has_ballots(store)
        assert ballot_date_range(store, "Toy") is None


def test_dates_and_topics_of_the_toy(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as store:
        assert has_ballots(store)
        assert ballot_date_range(store, "Toy") == (dt.date(2019, 3, 2), dt.date(2020, 3, 23))
        dates = ballot_dates(store, "Toy")
        assert len(dates) == 8 and dates["2020-v4"] == dt.date(2020, 3, 23)
        assert topic_counts(store, "Toy") == [("", 8)]  # no topic column: all under ''
        assert topic_counts(store, "Toy", *Y2020) == [("", 4)]
        assert ballot_date_range(store, "Nobody") is None


def test_one_period_of_votes_groups_and_names(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as store:
        votes, groups, names = period_votes(store, "Toy", *Y2020)
        assert len(votes) == 6 * 4  # six members × the year's four ballots
        assert list(votes["ballot_id"].drop_duplicates()) == ["2020-v1", "2020-v2", "2020-v3",
                                                               "2020-v4"]  # in date order
        yes = votes[votes["choice"] == "yes"].groupby("ballot_id").size().to_dict()
        assert yes == {"2020-" + b: row.count("Y") for b, row in toy.TABLE.items()}
        # every vote is cast, each member in one group the whole year: 4 cast votes each
        assert sorted(zip(groups["member_id"], groups["group_name"], groups["n"])) == \
            sorted((m, g, 4) for m, g in zip(toy.MEMBERS, toy.GROUPS))
        assert sorted(names["member_id"]) == sorted(toy.MEMBERS)


def test_yes_no_ballots_have_no_scores(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as store:
        ballots = period_scale_ballots(store, "Toy", *Y2020)
        assert len(ballots) == 4 and set(ballots["scale"]) == {"binary"}
        spread, answers = period_scores(store, "Toy", *Y2020)
        assert spread.empty and answers.empty
