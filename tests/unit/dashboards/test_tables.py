"""ReportTables: validation at the boundary, normalised types, graceful emptiness."""

import pandas as pd
import pytest

from blocwatch.dashboards.errors import ReportInputError
from blocwatch.dashboards.tables import ReportTables
from tests.dash_synthetic import HARBOUR, TARN, make_tables


def test_all_tables_optional_and_columns_added():
    t = ReportTables()
    assert t.metrics.empty and list(t.metrics.columns)[:4] == ["body", "period", "metric", "value"]
    assert t.bodies() == [] and t.groups() == []


def test_missing_required_column_is_reported():
    with pytest.raises(ReportInputError, match="missing column\\(s\\) value") as err:
        ReportTables(metrics=pd.DataFrame({"body": ["B"], "period": ["2001"], "metric": ["m"]}))
    assert err.value.exit_code == 65 and err.value.fix


def test_not_a_frame_is_reported():
    with pytest.raises(ReportInputError, match="expected a pandas DataFrame"):
        ReportTables(metrics=[1, 2])


def test_types_normalised():
    t = ReportTables(metrics=pd.DataFrame({
        "body": ["B"], "period": [2001], "metric": ["m"], "value": ["0.5"],
        "period_start": ["2001-01-01"], "note": [float("nan")]}))
    row = t.metrics.iloc[0]
    assert row.period == "2001" and row.value == 0.5 and row.note is None
    assert row.period_start == pd.Timestamp("2001-01-01")


def test_bodies_groups_and_for_body():
    t = make_tables()
    assert t.bodies() == [HARBOUR, TARN]
    assert t.groups() == ["Lantern Group", "Quayside League", "Tideward"]
    one = t.for_body(TARN)
    assert set(one.metrics.body) == {TARN} and set(one.edges.body) == {TARN}
    assert one.provenance == t.provenance


def test_extra_columns_pass_through_untouched():
    t = ReportTables(metrics=pd.DataFrame({"body": ["B"], "period": ["2001"], "metric": ["m"],
                                           "value": [0.1], "source": ["roll 12"]}))
    assert t.metrics["source"].iloc[0] == "roll 12"
