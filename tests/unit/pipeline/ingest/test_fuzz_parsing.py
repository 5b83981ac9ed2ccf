"""Property tests: random bytes and random tables never crash a load; valid tables round-trip.

"Never crash" means: a load either succeeds or raises a BlocwatchError (one line, an exit
code), and a failed load leaves the store exactly as it was.
"""

import csv
import io
import json
import tempfile
from pathlib import Path

import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from blocwatch.pipeline.errors import BlocwatchError
from blocwatch.pipeline.ingest.codes import BUILTIN, CHOICES, choice_of, normalise, resolve
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.store.database import Store

FUZZ = settings(max_examples=25, deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
BASE = "ballot_id,date,member_id,vote,group\nb0,2020-01-06,M0,yes,G\n"


_STORE: list[Store] = []


def _store() -> Store:
    """One store for all examples, holding one vote: failed loads must leave it as it is."""
    if not _STORE:
        store = Store(":memory:")
        with tempfile.TemporaryDirectory() as tmp:
            base = Path(tmp) / "base.csv"
            base.write_text(BASE, encoding="utf-8")
            ingest_files(store, [base], body="Fuzz")
        _STORE.append(store)
    return _STORE[0]


def _load_or_refuse(data: bytes, suffix: str, *, check: bool = True, **options) -> None:
    """Load ``data`` as a file with ``suffix``: success, or a one-line error and no change."""
    store = _store()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / f"input{suffix}"
        path.write_bytes(data)
        before = store.content_hash()
        if check:  # a check never writes, whatever it finds
            ingest_files(store, [path], body="Fuzz", check_only=True, **options)
            assert store.content_hash() == before
        try:
            ingest_files(store, [path], body="Fuzz", **options)
        except BlocwatchError as exc:
            assert "\n" not in exc.line()
            assert store.content_hash() == before


@FUZZ
@given(st.binary(max_size=600), st.sampled_from([".csv", ".jsonl", ".parquet", ".xlsx", ".tsv"]))
def test_random_bytes_never_crash(data, suffix):
    _load_or_refuse(data, suffix)


@FUZZ
@given(st.binary(max_size=400))
def test_random_bytes_after_a_good_header_never_crash(data):
    _load_or_refuse(b"ballot_id,date,member_id,vote,group\n" + data, ".csv", check=False)


cells = st.text(alphabet=st.characters(blacklist_categories=["Cs"]), max_size=12)


@FUZZ
@given(st.lists(st.lists(cells, min_size=1, max_size=7), min_size=1, max_size=8),
       st.sampled_from([",", ";", "\t"]), st.sampled_from(["long", "wide"]))
def test_random_tables_never_crash(rows, delimiter, layout):
    out = io.StringIO()
    writer = csv.writer(out, delimiter=delimiter)
    writer.writerow(["ballot_id", "date", "member_id", "vote", "group"][:len(rows[0])])
    writer.writerows(rows)
    _load_or_refuse(out.getvalue().encode("utf-8"), ".csv", layout=layout, check=False)


@FUZZ
@given(st.lists(st.dictionaries(st.sampled_from(["ballot_id", "date", "member_id", "vote",
                                                 "group", "x"]),
                                st.one_of(cells, st.integers(), st.none(), st.booleans(),
                                          st.lists(st.integers(), max_size=2))),
                min_size=1, max_size=6))
def test_random_json_lines_never_crash(records):
    data = "\n".join(json.dumps(r) for r in records).encode()
    _load_or_refuse(data, ".jsonl", check=False)


# -- valid inputs round-trip -------------------------------------------------------------------

ids = st.text(alphabet=st.sampled_from("ABCxyz019_-éß"), min_size=1, max_size=6).filter(
    lambda s: s.strip() == s)
spellings = st.sampled_from(sorted(c for c in BUILTIN if c))
dressed = st.tuples(spellings, st.sampled_from([str.upper, str.lower, str.title]),
                    st.sampled_from(["", " ", "  "])).map(lambda t: t[2] + t[1](t[0]) + t[2])


@st.composite
def roll_calls(draw):
    ballots = draw(st.lists(ids, min_size=1, max_size=4, unique=True))
    members = draw(st.lists(ids, min_size=1, max_size=5, unique=True))
    rows = []
    for i, ballot in enumerate(ballots):
        for member in members:
            rows.append({"ballot_id": ballot, "date": f"2021-0{1 + i % 9}-1{i % 10}",
                         "member_id": member, "vote": draw(dressed), "group": "G" + member[0]})
    return pd.DataFrame(rows)


@FUZZ
@given(roll_calls(), st.sampled_from([".csv", ".jsonl", ".parquet"]))
def test_valid_tables_round_trip(frame, suffix):
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / f"votes{suffix}"
        if suffix == ".csv":
            frame.to_csv(path, index=False)
        elif suffix == ".jsonl":
            frame.to_json(path, orient="records", lines=True, force_ascii=False)
        else:
            frame.to_parquet(path, index=False)
        with Store(":memory:") as store:
            report = ingest_files(store, [path], body="Round Trip")
            stored = store.df("SELECT ballot_id, member_id, raw, choice FROM votes "
                              "ORDER BY ballot_id, member_id")
    assert report.rows == len(frame)
    expected = frame.assign(raw=frame["vote"].str.strip(), choice=frame["vote"].map(choice_of))
    expected = expected[["ballot_id", "member_id", "raw", "choice"]].sort_values(
        ["ballot_id", "member_id"]).reset_index(drop=True)
    pd.testing.assert_frame_equal(stored, expected, check_dtype=False)


# -- code mapping ------------------------------------------------------------------------------

@given(st.one_of(st.text(), st.none(), st.floats(allow_nan=True)))
def test_code_lookup_is_total_and_normalising_is_idempotent(code):
    assert choice_of(code) in (*CHOICES, None)
    assert normalise(normalise(code)) == normalise(code)


@given(st.lists(st.one_of(st.text(max_size=5), st.sampled_from(sorted(BUILTIN)))))
def test_resolve_partitions_the_codes(codes):
    known, unknown = resolve(codes)
    assert set(known) | set(unknown) == set(codes)
    assert not set(known) & set(unknown)
    assert all(choice_of(c) == v for c, v in known.items())
