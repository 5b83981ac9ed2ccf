"""Period specs."""

from datetime import date

import pytest

from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.options import read_terms
from blocwatch.pipeline.errors import BadInputError, UsageError


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


def test_rolling_windows():
    ps = make_periods("rolling:24m:12m", date(2001, 5, 3), date(2003, 2, 1))
    assert [(p.start, p.end) for p in ps] == [
        (date(2001, 5, 1), date(2003, 4, 30)), (date(2002, 5, 1), date(2004, 4, 30))]
    assert ps[0].name == "2001-05..2003-04"
    assert make_periods("rolling:1y:6m", date(2001, 1, 1), date(2001, 2, 1))[0].end == \
        date(2001, 12, 31)


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
