"""The toy roll call: six members, two groups, four yes/no ballots, small enough to check by hand.

Members A1, A2, A3 form group A and B1, B2, B3 group B; everyone votes on every ballot::

    ballot  A1 A2 A3 B1 B2 B3
    v1      Y  Y  Y  N  N  N
    v2      Y  Y  N  N  N  N
    v3      Y  Y  Y  Y  Y  Y     (unanimous)
    v4      N  N  N  Y  Y  N

Values derived by hand from this table (each confirmed by the unit test named beside it):

* agreement a_ij = ballots cast alike / ballots both cast: A1–A2 = B1–B2 = 1;
  A1–A3 = A2–A3 = B1–B3 = B2–B3 = A3–B3 = 3/4; A1–B1 = A1–B2 = A2–B1 = A2–B2 = 1/4;
  A1–B3 = A2–B3 = A3–B1 = A3–B2 = 1/2 (tests/unit/pipeline/build/test_agreement.py);
* weighted modularity of the groups on the complete graph weighted by a_ij (no self-loops):
  Q = 1/14; without the unanimous v3, Q = 0.2 — every unanimous ballot adds 1/V to every pair
  and pulls Q toward 0, which is why the build leaves unanimous ballots out by default
  (tests/unit/metrics/graph/test_modularity.py);
* weighted E–I index −1/7, −0.4 without v3 (tests/unit/metrics/graph/test_crossgroup.py);
* Rice index of A per ballot 1, 1/3, 1, 1 → mean 5/6; Agreement Index of A on v2 = 0.5;
  group-line ballots v1, v2, v4 (3 of 4); A3 votes with A's majority on 2 of those 3
  (tests/unit/metrics/agreement/test_cohesion.py);
* Cohen's kappa A1 vs B3: p_o = 1/2, p_e = 3/8 → κ = 0.2, as
  ``sklearn.metrics.cohen_kappa_score`` gives (tests/unit/metrics/agreement/test_scales.py).

The same table is in the files of ``fixtures/ingest/`` (written by its make_fixtures.py).
"""

from __future__ import annotations

import csv
from fractions import Fraction
from pathlib import Path

import numpy as np

from blocwatch.metrics.registry import NO, YES

TABLE = {"v1": "YYYNNN", "v2": "YYNNNN", "v3": "YYYYYY", "v4": "NNNYYN"}
MEMBERS = ["A1", "A2", "A3", "B1", "B2", "B3"]
GROUPS = ["A", "A", "A", "B", "B", "B"]
LABELS = np.array([0, 0, 0, 1, 1, 1])
DATES = {"v1": "2020-03-02", "v2": "2020-03-09", "v3": "2020-03-16", "v4": "2020-03-23"}
UNANIMOUS = 2  # column of v3

# Vote codes, rows A1..B3, columns v1..v4 (the int8 matrix the build works on).
VOTES = np.array([[YES if TABLE[b][i] == "Y" else NO for b in TABLE] for i in range(6)],
                 dtype=np.int8)
# The same as 1 = yes, 0 = no.
YES_NO = (VOTES == YES).astype(int)

_HALF, _QUARTER, _THREE_Q = Fraction(1, 2), Fraction(1, 4), Fraction(3, 4)
# Hand values of a_ij (see the module docstring), upper triangle.
AGREEMENT_PAIRS = {(0, 1): Fraction(1), (3, 4): Fraction(1),
                   (0, 2): _THREE_Q, (1, 2): _THREE_Q, (3, 5): _THREE_Q, (4, 5): _THREE_Q,
                   (2, 5): _THREE_Q, (0, 3): _QUARTER, (0, 4): _QUARTER, (1, 3): _QUARTER,
                   (1, 4): _QUARTER, (0, 5): _HALF, (1, 5): _HALF, (2, 3): _HALF,
                   (2, 4): _HALF}


def agreement() -> np.ndarray:
    """The hand values as a full matrix, diagonal 1."""
    a = np.eye(6)
    for (i, j), value in AGREEMENT_PAIRS.items():
        a[i, j] = a[j, i] = float(value)
    return a


def agreement_weights(drop=()) -> np.ndarray:
    """Share of ballots cast alike (everyone is present), zero diagonal; ``drop`` removes
    ballot columns first (e.g. ``drop=[UNANIMOUS]``)."""
    v = np.delete(VOTES, list(drop), axis=1)
    w = (v[:, None, :] == v[None, :, :]).mean(axis=2)
    np.fill_diagonal(w, 0.0)
    return w


def write_csv(path: str | Path, *, dates: dict[str, str] | None = None, prefix: str = "") -> Path:
    """The roll call as a long CSV (ballot_id, date, member_id, vote, group); ``prefix``
    goes before each ballot id (ids are unique within a body)."""
    path = Path(path)
    dates = dates or DATES
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["ballot_id", "date", "member_id", "vote", "group"])
        for ballot, row in TABLE.items():
            for member, group, code in zip(MEMBERS, GROUPS, row):
                w.writerow([prefix + ballot, dates[ballot], member, code, group])
    return path


def write_years(folder: str | Path, years=(2019, 2020)) -> list[Path]:
    """One long CSV per year, each holding the whole roll call (dates moved into that year,
    ballot ids prefixed with the year)."""
    out = []
    for year in years:
        dates = {b: f"{year}{d[4:]}" for b, d in DATES.items()}
        out.append(write_csv(Path(folder) / f"toy-{year}.csv", dates=dates, prefix=f"{year}-"))
    return out


def load_store(path: str | Path, years=(2019, 2020), *, body: str = "Toy"):
    """A real DuckDB store at ``path`` holding the roll call once per year (one period each
    under the default period spec); returns the open :class:`Store`."""
    from blocwatch.pipeline.ingest.load import ingest_files
    from blocwatch.pipeline.store.database import Store

    store = Store(path)
    ingest_files(store, write_years(Path(path).parent, years), body=body)
    return store


# Build options under which the roll call has numbers: every pair shares 3–4 counted ballots,
# so the default minimum of 5 shared ballots would leave no agreement at all.
def fast_options(**agreement):
    from blocwatch.pipeline.options import AgreementOptions, BuildOptions

    return BuildOptions(bootstrap=0, permutations=0,
                        agreement=AgreementOptions(**{"min_shared": 1, **agreement}))
