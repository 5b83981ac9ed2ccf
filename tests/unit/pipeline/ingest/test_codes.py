"""Vote codes: the built-in table, normalisation, and mapping files."""

import math

import pytest

from blocwatch.pipeline.errors import BadInputError, UsageError
from blocwatch.pipeline.ingest.codes import (
    AMBIGUOUS,
    BUILTIN,
    CHOICES,
    ambiguity,
    choice_of,
    load_mapping,
    normalise,
    resolve,
)

# [S: issue 2, "Ingest": the spellings the built-in table must know; issue 13 took "0" and "-"
# out of "no": clerks use them for other things too, so they are refused until mapped]
ISSUE_SPELLINGS = {
    "yes": ["aye", "yea", "for", "y", "1", "+", "yes"],
    "no": ["nay", "against", "n", "no"],
    "abstain": ["abstain", "abstention", "present"],
    "absent": ["absent", "not voting", "excused", ""],
}


@pytest.mark.parametrize("choice,codes", ISSUE_SPELLINGS.items())
def test_builtin_table_knows_every_spelling_of_the_issue(choice, codes):
    for code in codes:
        assert choice_of(code) == choice, code


def test_builtin_table_has_nothing_else():
    """The table is exactly the issue's list (hand-counted: 7 + 4 + 3 + 4 = 18 codes)."""
    assert len(BUILTIN) == 18
    assert set(BUILTIN.values()) == set(CHOICES)


@pytest.mark.parametrize("code", ["-", " - ", "0"])
def test_ambiguous_symbols_are_refused_unless_mapped(code):
    """Issue 13: '-' (and '0') mean different things to different clerks."""
    assert choice_of(code) is None
    assert ambiguity(code)
    assert choice_of(code, {normalise(code): "absent"}) == "absent"
    assert not set(AMBIGUOUS) & set(BUILTIN)  # never silently in the built-in table


@pytest.mark.parametrize("raw,choice", [
    ("AYE", "yes"), ("  Nay ", "no"), ("Not   Voting", "absent"), ("NOT\tvoting", "absent"),
    ("Abstention", "abstain"), (" + ", "yes"), (None, "absent"), ("   ", "absent"),
    (float("nan"), "absent"),
])
def test_case_and_whitespace_do_not_matter(raw, choice):
    assert choice_of(raw) == choice


def test_unknown_codes_are_none():
    assert choice_of("maybe") is None
    assert choice_of("y es") is None  # inner space is kept (collapsed), so this is not "yes"
    assert normalise("  A  B ") == "a b"
    assert normalise(math.nan) == ""


def test_resolve_splits_known_and_unknown_in_input_order():
    known, unknown = resolve(["Y", "zz", None, "N", "??"])
    assert known == {"Y": "yes", None: "absent", "N": "no"}
    assert unknown == ["zz", "??"]


def test_mapping_wins_over_the_builtin_table(tmp_path):
    path = tmp_path / "codes.csv"
    path.write_text("raw,choice\npresent,yes\n JA ,Yes\nnein,no\n", encoding="utf-8")
    mapping = load_mapping(path)
    assert mapping == {"present": "yes", "ja": "yes", "nein": "no"}
    assert choice_of("Present", mapping) == "yes" and choice_of("present") == "abstain"
    assert choice_of("Ja", mapping) == "yes"


def test_mapping_file_with_bom_blank_lines_and_extra_column_order(tmp_path):
    path = tmp_path / "codes.csv"
    path.write_bytes("\ufeffchoice,raw\n\nyes,oui\r\nno,non\n".encode())
    assert load_mapping(path) == {"oui": "yes", "non": "no"}


def test_mapping_one_code_two_choices_names_both_lines(tmp_path):
    path = tmp_path / "codes.csv"
    path.write_text("raw,choice\nja,yes\n\nnein,no\nJA,no\n", encoding="utf-8")
    with pytest.raises(BadInputError) as err:
        load_mapping(path)
    assert f"{path}:5, column 'raw'" in str(err.value)
    assert "maps to no here and to yes on line 2" in str(err.value)


@pytest.mark.parametrize("content,where,says", [
    ("raw,choice\nja,maybe\n", ":2, column 'choice'", "'maybe' is not a choice"),
    ("code,choice\nja,yes\n", ":1", "lacks the columns raw and choice"),
    ("raw,choice\nja\n", ":2", "has 1 fields, the header 2"),
    ("", "", "is empty"),
])
def test_mapping_file_problems(tmp_path, content, where, says):
    path = tmp_path / "codes.csv"
    path.write_text(content, encoding="utf-8")
    with pytest.raises(BadInputError) as err:
        load_mapping(path)
    assert f"{path}{where}" in str(err.value) and says in str(err.value)


def test_mapping_file_not_utf8_names_the_line(tmp_path):
    path = tmp_path / "codes.csv"
    path.write_bytes(b"raw,choice\nja,yes\nn\xe9in,no\n")
    with pytest.raises(BadInputError, match=r"codes.csv:3: is not UTF-8"):
        load_mapping(path)


def test_missing_mapping_file_is_a_usage_error(tmp_path):
    with pytest.raises(UsageError):
        load_mapping(tmp_path / "nope.csv")
