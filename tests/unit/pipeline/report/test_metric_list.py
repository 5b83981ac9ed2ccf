"""The metric list `blocwatch metrics` prints: one row per registered metric, its reference."""

import csv
import io
import json

import pytest

from blocwatch.metrics import metric_names
from blocwatch.metrics.reference import METRIC_INFO
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.report.metric_list import COLUMNS, format_metric_list, metric_list


def test_one_row_per_registered_metric_in_export_order():
    frame = metric_list()
    assert list(frame.columns) == COLUMNS
    assert frame["metric"].tolist() == metric_names()
    for row in frame.itertuples():
        info = METRIC_INFO[row.metric]
        assert (row.label, row.formula, row.reference) == (info.label, info.formula,
                                                            info.reference)


def test_csv_and_json_round_trip():
    frame = metric_list()
    rows = list(csv.DictReader(io.StringIO(format_metric_list(frame, "csv"))))
    assert [r["metric"] for r in rows] == frame["metric"].tolist()
    assert rows[0]["description"] == frame["description"].iloc[0]
    records = json.loads(format_metric_list(frame, "json"))
    assert [r["metric"] for r in records] == frame["metric"].tolist()
    assert set(records[0]) == set(COLUMNS)


def test_text_table_names_every_metric_with_its_label():
    text = format_metric_list(metric_list(), "text")
    lines = text.splitlines()
    assert lines[0].split()[:2] == ["metric", "label"]
    for name in metric_names():
        line = next(x for x in lines if x.startswith(name + " "))
        assert METRIC_INFO[name].label in line


def test_unknown_format_is_a_usage_error():
    with pytest.raises(UsageError, match="use one of: text, csv, json"):
        format_metric_list(metric_list(), "xml")


def test_every_metric_names_its_interval_method_and_reference():
    # Issue 12: the interval method of each family is documented where users read the list.
    from blocwatch.metrics import FAMILIES
    from blocwatch.metrics.uncertainty.resampling import INTERVAL_WORDS

    frame = metric_list().set_index("metric")
    for fam in FAMILIES.values():
        for name in fam.metrics:
            words = frame.loc[name, "interval"]
            assert words == INTERVAL_WORDS[fam.interval] and "19" in words, name
    assert frame.loc["ideal_median_gap", "interval"].startswith("standard")
