"""Every registered metric carries its methods reference: label, description, formula, reference.

The reference is the project's own (blocwatch.metrics.reference); a metric registered without
one, or with an empty field, fails here rather than reaching a page as a bare name.
"""

import re

import blocwatch.metrics  # noqa: F401  (registers every family)
from blocwatch.metrics.reference import METRIC_INFO
from blocwatch.metrics.registry import metric_info, metric_names


def test_every_registered_metric_has_label_description_formula_reference():
    missing = [m for m in metric_names() if m not in METRIC_INFO]
    assert not missing, f"no entry in blocwatch.metrics.reference for {missing}"
    for name in metric_names():
        info = metric_info(name)
        for field in ("label", "description", "formula", "reference"):
            assert getattr(info, field).strip(), f"{name}: empty {field}"


def test_no_entry_for_a_metric_that_is_not_registered():
    assert set(METRIC_INFO) <= set(metric_names()), set(METRIC_INFO) - set(metric_names())


def test_labels_are_distinct_and_references_name_a_year():
    labels = [metric_info(m).label for m in metric_names()]
    assert len(set(labels)) == len(labels)
    for name in metric_names():  # a published source: author and year, e.g. "(1925)"
        assert re.search(r"\((19|20)\d\d\)", metric_info(name).reference), name


def test_check_values_name_their_source():
    # "input → value [source]": each check says where its value comes from.
    for name in metric_names():
        for check in metric_info(name).checks:
            assert "→" in check and re.search(r"\[[^\]]+\]", check), (name, check)
