"""The Methods section: every registered metric is shown with its label, description, formula,
direction and reference, as the metric list a report is built with carries them."""

import re

import numpy as np
import pandas as pd

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.pages.briefing import build_briefing
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels
from blocwatch.dashboards.tables import ReportTables
from blocwatch.metrics.registry import metric_names
from blocwatch.pipeline.report.metric_list import metric_list

BODY = "Harbour Board of Veldmark"


def _page() -> str:
    names = metric_names()
    rows = [{"body": BODY, "period": str(p), "metric": m, "value": v,
             "period_start": f"{p}-01-01", "period_end": f"{p}-12-31"}
            for p, v in ((2001, 0.2), (2002, 0.3)) for m in names]
    tables = ReportTables(metrics=pd.DataFrame(rows), measures=metric_list())
    html, _ = build_briefing(tables, BODY, colours=palette.group_colours([]))
    return html.split("<section id='methods'>", 1)[1].split("</section>", 1)[0]


def test_every_registered_metric_is_described_on_the_page():
    section = _page()
    listed = metric_list().set_index("metric")
    assert set(listed.index) == set(metric_names())
    for name in metric_names():
        r = listed.loc[name]
        entry = section.split(f"<code>{esc(name)}</code></dt>", 1)[1].split("</dd>", 1)[0]
        assert esc(r.description) in entry, name
        assert esc(r.formula) in entry and esc(r.reference) in entry, name
        assert "more division" in entry, name
    assert "No description" not in section and "Not described" not in section


def test_labels_are_words():
    known = labels.catalogue(metric_list())
    for name in metric_names():
        label = labels.info(name, known).label
        assert "_" not in label and label != name, name
        # "Mds median gap" is not a word a reader knows: abbreviations stay in capitals.
        assert not re.search(r"\b(Mds|Ei|Ari)\b", label), label
    assert labels.words("mds_median_gap") == "MDS median gap"


def test_directions_on_the_page_match_the_direction_given():
    section = _page()
    known = labels.catalogue(metric_list())
    for name in metric_names():
        d = labels.info(name, known).direction
        entry = section.split(f"<code>{esc(name)}</code></dt>", 1)[1].split("</dd>", 1)[0]
        expected = {"higher": "Higher values mean more division",
                    "lower": "Lower values mean more division"}.get(d, "Neither direction")
        assert expected in entry, name
    assert np.isin(["higher", "lower"], [labels.info(n, known).direction
                                         for n in metric_names()]).all()


def test_methods_say_the_permutation_p_is_one_sided_toward_division():
    # Issue 12: null_p is one-sided in each measure's direction of division and null_z is
    # signed so that positive means more split than chance; the page must say both.
    section = _page()
    entry = section.split("<dt>Permutation p</dt>", 1)[1].split("</dd>", 1)[0]
    assert "one-sided" in entry and "direction that means more division" in entry
    assert "null_z" in entry and "positive means more split than chance" in entry
    assert "Phipson" in entry  # the (b + 1)/(m + 1) rule's reference
