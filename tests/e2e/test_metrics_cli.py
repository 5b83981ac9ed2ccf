"""`blocwatch metrics` through the installed command: every registered metric, its reference."""

import csv
import io
import json

from blocwatch.metrics import metric_names
from blocwatch.metrics.registry import metric_info


def test_metrics_lists_every_registered_metric(run_cli):
    text = run_cli("metrics", check=True).stdout.splitlines()
    assert text[0].split()[:2] == ["metric", "label"]
    assert [line.split()[0] for line in text[1:]] == metric_names()
    rows = list(csv.DictReader(io.StringIO(run_cli("metrics", "--format", "csv",
                                                   check=True).stdout)))
    assert [r["metric"] for r in rows] == metric_names()
    for r in rows:
        info = metric_info(r["metric"])
        assert (r["label"], r["formula"], r["reference"]) == (info.label, info.formula,
                                                              info.reference)
    records = json.loads(run_cli("metrics", "--format", "json", check=True).stdout)
    assert [r["metric"] for r in records] == metric_names()


def test_unknown_format_is_a_usage_error(run_cli):
    proc = run_cli("metrics", "--format", "xml")
    assert proc.returncode == 2 and proc.stderr.startswith("error: ")
