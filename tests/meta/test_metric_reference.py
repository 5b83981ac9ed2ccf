"""Every registered metric carries its methods reference: label, description, formula, reference.

The reference is the project's own (blocwatch.metrics.reference); a metric registered without
one, or with an empty field, fails here rather than reaching a page as a bare name.
"""

import re
from pathlib import Path

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


ROOT = Path(__file__).resolve().parents[2]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def test_readme_measures_table_lists_every_metric():
    section = README.split("## Measures", 1)[1].split("\n## ", 1)[0]
    listed = re.findall(r"^\| `(\w+)` \|", section, flags=re.M)
    assert listed == metric_names()


def test_readme_contents_link_every_section():
    contents = README.split("## Contents", 1)[1].split("\n## ", 1)[0]
    linked = re.findall(r"^- \[(.+?)\]\(#[\w-]+\)$", contents, flags=re.M)
    sections = [h for h in re.findall(r"^## (.+)$", README, flags=re.M) if h != "Contents"]
    assert linked == sections


def test_nothing_cites_a_reference_file_the_repository_does_not_have():
    # The methods reference and design notes live in the repository (metrics/reference.py,
    # README, DEVELOPERS.md); a citation of an outside notes file would leave readers stranded.
    cited = re.compile(r"\b(METHODS|DESIGN)(\.md| §)")
    offenders = []
    for path in ROOT.rglob("*"):
        if any(part.startswith(".") for part in path.relative_to(ROOT).parts) or \
                not path.is_file() or path.suffix not in {".py", ".md", ".toml", ".txt"}:
            continue
        text = path.read_text(encoding="utf-8", errors="replace")
        offenders += [f"{path.relative_to(ROOT)}:{n}" for n, line in
                      enumerate(text.splitlines(), 1) if cited.search(line)]
    assert not offenders, offenders
