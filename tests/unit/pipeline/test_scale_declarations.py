"""Scale declarations and answer reading (pipeline/scales.py)."""

import pytest

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.scales import (
    ALPHA_LEVEL,
    BINARY,
    Scale,
    number_text,
    parse_scale,
    read_answer,
    scale_from_cells,
    scale_from_store,
)


@pytest.mark.parametrize("text,expected", [
    ("", BINARY), ("binary", BINARY), ("Ordinal:1..9", Scale("ordinal", 1, 9)),
    ("ordinal: -2 .. 2", Scale("ordinal", -2, 2)), ("continuous", Scale("continuous")),
    ("continuous:spread", Scale("continuous")), ("continuous:0..1e6", Scale("continuous", 0, 1e6)),
    ("categorical:fund|defer|decline", Scale("categorical", options=("fund", "defer", "decline"))),
])
def test_parse_scale(text, expected):
    got = parse_scale(text)
    assert got == expected
    assert parse_scale(got.spec) == got  # the canonical text parses back to the same scale


@pytest.mark.parametrize("text,why", [
    ("ordinal", "range"), ("ordinal:9..1", "lower to a higher"), ("ordinal:1-9", "LOW..HIGH"),
    ("categorical:only", "two options"), ("categorical:A|a", "repeat"), ("likert:1..5", "scale"),
    ("binary:1..2", "scale"),
])
def test_bad_declarations_say_what_to_write(text, why):
    with pytest.raises(UsageError, match=why) as info:
        parse_scale(text)
    assert "ordinal:1..9" in info.value.fix


def test_scale_from_cells_and_store():
    assert scale_from_cells(None, "", None, None) is None
    assert scale_from_cells("ordinal", "1", "5") == Scale("ordinal", 1, 5)
    assert scale_from_cells(None, 0, 10) == Scale("ordinal", 0, 10)  # a range means ordered
    assert scale_from_cells("continuous", 0, 100) == Scale("continuous", 0, 100)
    assert scale_from_cells("categorical", options="yes | no | later").options == \
        ("yes", "no", "later")
    assert scale_from_cells("ordinal:1..7") == Scale("ordinal", 1, 7)
    row = Scale("categorical", options=("a", "b")).store_row()
    assert scale_from_store(**{"kind": row["scale"], "low": row["scale_min"],
                               "high": row["scale_max"], "options": row["options"]}) == \
        Scale("categorical", options=("a", "b"))
    assert scale_from_store("ordinal", 1.0, float("nan")).high is None


def test_read_ordinal_and_continuous_answers():
    s = parse_scale("ordinal:1..9")
    assert read_answer(" 7 ", s) == ("7", 7.0)
    assert read_answer("2.5", s) == ("2.5", 2.5)  # ranks may tie
    assert read_answer(None, s) == ("absent", None)
    assert read_answer("Not voting", s) == ("absent", None)
    assert read_answer("abstain", s) == ("abstain", None)
    with pytest.raises(ValueError, match="outside the range 1..9"):
        read_answer("10", s)
    with pytest.raises(ValueError, match="outside"):  # not the yes/no code 0
        read_answer("0", s)
    with pytest.raises(ValueError, match="not a number"):
        read_answer("seven", s)
    with pytest.raises(ValueError, match="finite"):
        read_answer("inf", parse_scale("continuous"))
    assert read_answer("123456789", parse_scale("continuous")) == ("123456789", 123456789.0)


def test_read_categorical_answers_and_a_mapping():
    s = parse_scale("categorical:Fund|Defer|Decline")
    assert read_answer("defer", s) == ("Defer", 1.0)
    assert read_answer("DECLINE", s) == ("Decline", 2.0)
    with pytest.raises(ValueError, match="not one of the options"):
        read_answer("maybe", s)
    assert read_answer("recused", s, {"recused": "abstain"}) == ("abstain", None)


def test_number_text_and_levels():
    assert number_text(3.0) == "3" and number_text(0.1) == "0.1"
    assert ALPHA_LEVEL == {"binary": "nominal", "categorical": "nominal",
                           "ordinal": "ordinal", "continuous": "interval"}
