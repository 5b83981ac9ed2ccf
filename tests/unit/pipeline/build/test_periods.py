"""Period specs."""

from datetime import date

import pytest

from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.errors import BadInputError, UsageError
from blocwatch.pipeline.options import read_terms


def test_calendar_years():
    ps = make_periods("year", date(2001, 3, 1), date(2003, 1, 5))
    assert [p.name for p in ps] == ["2001", "2002", "2003"]
    assert ps[0].start == date(2001, 1, 1) and ps[0].end == date(2001, 12, 31)


def test_year_starting_in_month():
    ps = make_periods("year:09", date(2001, 3, 1), date(2002, 10, 1))
    assert [(p.name, p.start, p.end) for p in ps] == [
        ("2000/01", date(2000, 9, 1), date(2001, 8, 31)),
        ("2001/02", date(2001, 9, 1), date(2002, 8, 31)),
        ("2002/03", date(2002, 9, 1), date(2003, 8, 31))]


def test_rolling_windows_end_at_the_data():
    # data from 2020-01 to 2024-09; 12-month windows every 6 months
    ps = make_periods("rolling:12m:6m", date(2020, 1, 5), date(2024, 9, 10))
    full = [p for p in ps if not p.name.endswith("(partial)")]
    assert [p.name for p in full][-2:] == ["2023-01..2023-12", "2023-07..2024-06"]
    assert all(p.end <= date(2024, 9, 30) for p in ps)  # no window runs past the data
    # the ballots after the last full window: one window cut short at the data, marked
    assert (ps[-1].name, ps[-1].start, ps[-1].end) == (
        "2024-01..2024-09 (partial)", date(2024, 1, 1), date(2024, 9, 30))
    # every ballot date falls in some window
    assert ps[0].start <= date(2020, 1, 5) and ps[-1].end >= date(2024, 9, 10)


def test_rolling_windows_that_fit_have_no_partial_tail():
    ps = make_periods("rolling:12m:12m", date(2020, 1, 5), date(2022, 12, 10))
    assert [p.name for p in ps] == ["2020-01..2020-12", "2021-01..2021-12", "2022-01..2022-12"]


def test_data_shorter_than_one_window_is_one_partial_window():
    ps = make_periods("rolling:24m:12m", date(2001, 5, 3), date(2003, 2, 1))
    assert [(p.name, p.start, p.end) for p in ps] == [
        ("2001-05..2003-02 (partial)", date(2001, 5, 1), date(2003, 2, 28))]


def test_terms(tmp_path):
    f = tmp_path / "terms.csv"
    f.write_text("name,start,end\nsecond,2005-01-01,2008-12-31\nfirst,2001-01-01,2004-12-31\n")
    ps = make_periods(f"terms:{f}", date(2002, 1, 1), date(2006, 1, 1))
    assert [p.name for p in ps] == ["first", "second"]


def test_overlapping_terms_are_bad_input(tmp_path):
    f = tmp_path / "terms.csv"
    f.write_text("name,start,end\na,2001-01-01,2004-12-31\nb,2004-06-01,2008-12-31\n")
    with pytest.raises(BadInputError, match=r"terms.csv:3: terms 'a' and 'b' overlap "
                       r"\('b' starts 2004-06-01, before 'a' on line 2"):
        read_terms(f)


@pytest.mark.parametrize("spec", ["decade", "year:13", "rolling:24m", "rolling:0m:1m"])
def test_bad_specs(spec):
    with pytest.raises(UsageError):
        make_periods(spec, date(2001, 1, 1), date(2002, 1, 1))
