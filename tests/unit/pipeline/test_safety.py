"""Hostile strings: CSV-injection neutralising, body names, output paths, message quoting."""

import pandas as pd
import pytest

from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.safety import check_name, inside, neutralise_cell, neutralise_frame, show


# [S: OWASP "CSV Injection": cells starting with = + - @ tab or carriage return]
@pytest.mark.parametrize("cell", ["=1+1", "+SUM(A1)", "-2+3", "@cmd", "\t=x", "\r=x",
                                  '=HYPERLINK("http://example.invalid","x")'])
def test_formula_cells_get_a_leading_quote(cell):
    assert neutralise_cell(cell) == "'" + cell


@pytest.mark.parametrize("cell", ["Ann Example", "", "a=b", "1-2", 3, -3.5, None])
def test_other_cells_are_unchanged(cell):
    assert neutralise_cell(cell) == cell


def test_neutralise_frame_touches_only_text_columns():
    frame = pd.DataFrame({"name": ["=evil()", "Ok"], "value": [-1.0, 2.0]})
    out = neutralise_frame(frame)
    assert out["name"].tolist() == ["'=evil()", "Ok"]
    assert out["value"].tolist() == [-1.0, 2.0]
    assert frame["name"].tolist() == ["=evil()", "Ok"]  # the input is not modified


@pytest.mark.parametrize("name", ["../x", "a/b", "a\\b", "..", ".hidden", "CON", "nul.txt",
                                  "x\x00y", " padded", "", "a" * 101, "<script>", "a:b"])
def test_unsafe_body_names_are_refused(name):
    with pytest.raises(BadInputError):
        check_name(name)


@pytest.mark.parametrize("name", ["City Council", "Assembly of Marrow Sound", "Rat (Nord) 2",
                                  "Städterat", "O'Hara & Co.", "x-y_z"])
def test_ordinary_body_names_pass(name):
    assert check_name(name) == name


def test_inside_keeps_paths_in_their_folder(tmp_path):
    assert inside(tmp_path, "report.html") == (tmp_path / "report.html").resolve()
    for bad in ("../escape.html", "/etc/passwd", "a/../../b"):
        with pytest.raises(BadInputError, match="leaves the folder"):
            inside(tmp_path, bad)


def test_show_escapes_control_and_bidi_characters():
    assert show("a\x1b[31mred") == "'a\\x1b[31mred'"
    assert show("x\u202ey") == "'x\\u202ey'"
    assert show(None) == "(empty)"
    assert show("y" * 70) == "'" + "y" * 60 + "…' (70 characters)"
