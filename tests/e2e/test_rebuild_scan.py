"""A rebuild's scan is one transaction: every new or changed file is loaded, or none is.

Real CLI in a subprocess on a real store (the invented demo assembly, one file per year, see
tests/rebuild_util.py). The error must name the file that stopped the rest, give its fix as the
body's key in blocwatch.toml (a rebuild has no --replace), and leave every table unchanged.
"""

import csv

import pytest

from blocwatch.pipeline.demo.assembly import FIRST_YEAR
from blocwatch.pipeline.errors import EXIT_BAD_INPUT
from blocwatch.pipeline.store.database import Store
from tests.rebuild_util import cli, make_project


def _hash(store):
    with Store(store, read_only=True) as s:
        return s.content_hash()


def _rows(path):
    with path.open(newline="", encoding="utf-8") as fh:
        return list(csv.reader(fh))


def _write(path, rows):
    with path.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows)


def _flip(row, col):
    row[col] = "Nay" if row[col] in ("Aye", "Y", "for", "yes") else "Aye"
    return row


@pytest.fixture
def project(tmp_path):
    project = make_project(tmp_path / "p", 3)
    proc = cli("rebuild", "--no-report", cwd=project)
    assert proc.returncode == 0, proc.stderr
    return project


def _correct_a_loaded_file(project):
    """A corrected copy of a loaded year: one vote flipped (a 'changed' file)."""
    path = project / "data" / f"votes-{FIRST_YEAR + 1}.csv"
    rows = _rows(path)
    _flip(rows[1], rows[0].index("vote"))
    _write(path, rows)
    return path


def test_new_file_contradicting_the_store_stops_the_corrected_one_too(project):
    store = project / "blocwatch.duckdb"
    changed = _correct_a_loaded_file(project)
    # a new file repeating one vote of the first year, the other way round
    first = _rows(project / "data" / f"votes-{FIRST_YEAR}.csv")
    bad = project / "data" / "votes-extra.csv"
    _write(bad, [first[0], _flip(list(first[1]), first[0].index("vote"))])
    before = _hash(store)

    proc = cli("rebuild", "--no-report", cwd=project)
    assert proc.returncode == EXIT_BAD_INPUT, proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: ") and " — " in lines[0]
    line = lines[0]
    assert "votes-extra.csv:2" in line and "but the store holds" in line
    assert "--replace" not in line  # rebuild has no such flag
    assert 'set replace = true in [bodies."' in line and "blocwatch.toml" in line
    assert "nothing of this rebuild's 2 new or changed file(s) was loaded" in line
    assert _hash(store) == before  # the corrected file is not in the store either

    status = cli("status", cwd=project)
    assert f"{changed} (changed)" in status.stdout and f"{bad} (new)" in status.stdout

    bad.unlink()  # the clerk withdraws the extra file: the correction now loads
    proc = cli("rebuild", "--no-report", cwd=project)
    assert proc.returncode == 0, proc.stderr
    assert f"loaded: {changed} (changed)" in proc.stdout and "1 loaded" in proc.stdout


def test_unreadable_new_file_stops_the_corrected_one(project):
    store = project / "blocwatch.duckdb"
    _correct_a_loaded_file(project)
    bad = project / "data" / "votes-ragged.csv"
    first = _rows(project / "data" / f"votes-{FIRST_YEAR}.csv")
    bad.write_text(",".join(first[0]) + "\n" + ",".join(first[1][:-2]) + "\n",
                   encoding="utf-8")
    before = _hash(store)
    proc = cli("rebuild", "--no-report", cwd=project)
    assert proc.returncode == EXIT_BAD_INPUT, proc.stderr
    line = proc.stderr.strip()
    assert "\n" not in line and "votes-ragged.csv:2" in line
    assert "nothing of this rebuild's 2 new or changed file(s) was loaded" in line
    assert "stopped by new votes-ragged.csv" in line
    assert _hash(store) == before
