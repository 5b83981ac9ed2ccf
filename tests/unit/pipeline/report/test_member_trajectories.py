"""The members export's trajectory columns (previous_period, change, group_before,
switched_on), through a real store and build, checked against pandas computing the same from
the export's own long rows, and against the file's switch date."""

import csv

import numpy as np
import pandas as pd
import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.compute import BuildOptions
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.report.export import export_frame
from blocwatch.pipeline.store.database import Store

OLD_COLUMNS = ["body", "period", "period_start", "period_end", "member_id", "name",
               "group_name", "metric", "value", "note", "run_id"]
NEW_COLUMNS = ["previous_period", "change", "group_before", "switched_on",
               "period_spec"]  # the last: which period spec the rows were cut by
SWITCH_DAY = "2023-02-01"  # s00 votes with South from this ballot on (invented)


@pytest.fixture(scope="module")
def members(tmp_path_factory):
    # Invented board: 14 members in two groups, 36 ballots a year 2021-2023; s00 sits in
    # North until 2023, then moves to South on SWITCH_DAY (majority of its 2023 ballots).
    # n05 casts no ballot in 2022, so its 2023 row follows its 2021 row.
    tmp = tmp_path_factory.mktemp("traj")
    rng = np.random.default_rng(3)
    path = tmp / "board.csv"
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["ballot_id", "date", "member_id", "vote", "group"])
        for year in (2021, 2022, 2023):
            for k in range(36):
                day = f"{year}-{1 + k // 3:02d}-{1 + 10 * (k % 3):02d}"
                side = int(rng.integers(2))
                for i in range(14):
                    member = ("s" if i < 7 else "n") + f"{i % 7:02d}"
                    if member == "n05" and year == 2022:
                        continue
                    group = "South" if i < 7 else "North"
                    if member == "s00":
                        group = "South" if day >= SWITCH_DAY else "North"
                    lean = side if group == "South" else 1 - side
                    vote = lean if rng.random() > 0.1 + 0.1 * (year - 2021) else 1 - lean
                    w.writerow([f"{year}-{k:02d}", day, member, ["yes", "no"][vote], group])
    with Store(tmp / "s.duckdb") as store:
        ingest_files(store, [path], body="Ferry Board")
        build(store, options=BuildOptions(bootstrap=0, permutations=0))
        return export_frame(store, "members")


def test_old_columns_keep_their_order_and_new_ones_come_last(members):
    assert list(members.columns) == OLD_COLUMNS + NEW_COLUMNS


def test_change_and_previous_period_match_pandas(members):
    # Reference: pandas groupby/shift/diff over the export's own long rows, periods in order.
    m = members.sort_values(["member_id", "metric", "period_start"])
    keys = m.groupby(["member_id", "metric"])
    expected_prev = keys["period"].shift()
    expected_change = keys["value"].diff()
    pd.testing.assert_series_equal(m["previous_period"], expected_prev, check_names=False)
    np.testing.assert_allclose(m["change"].to_numpy(float), expected_change.to_numpy(float),
                               rtol=0, atol=1e-12)
    # The member absent in 2022 is compared with 2021, and the export says so.
    n05 = m[(m.member_id == "n05") & (m.metric == "loyalty") & (m.period == "2023")]
    assert n05["previous_period"].tolist() == ["2021"]
    # A member's first period has nothing to compare with.
    first = m[m.period == "2021"]
    assert first["previous_period"].isna().all() and first["change"].isna().all()


def test_switch_is_dated_where_the_file_dates_it(members):
    loyalty = members[members.metric == "loyalty"]
    switched = loyalty[loyalty.switched_on.notna()]
    assert switched[["member_id", "period", "group_before", "group_name"]].values.tolist() == \
        [["s00", "2023", "North", "South"]]
    assert str(pd.Timestamp(switched["switched_on"].iloc[0]).date()) == SWITCH_DAY
    # Everyone else stayed: group_before equals group_name wherever there is one.
    stayed = loyalty[loyalty.group_before.notna() & loyalty.switched_on.isna()]
    assert (stayed.group_before == stayed.group_name).all() and len(stayed) > 20
