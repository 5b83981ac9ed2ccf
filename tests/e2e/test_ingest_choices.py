"""Issue 13, loading half: a load says what it did with every code, cell and date.

Each test runs the installed command (``run_cli``, a subprocess) in a temporary folder on a real
DuckDB file and checks the exit code, the message and that stored tables did not change where
nothing may change. Expected counts are counted by hand from the files written here (invented
members and bodies).
"""

from pathlib import Path

from blocwatch.pipeline.store.database import Store

HEAD = "ballot_id,date,member_id,vote,group\n"
# Two ballots; A2 writes '-' twice (lines 3 and 7), B1 leaves a cell blank (line 4).
DASH = HEAD + ("x1,2020-02-03,A1,yes,Left\nx1,2020-02-03,A2,-,Left\nx1,2020-02-03,B1,,Right\n"
               "x1,2020-02-03,B2,no,Right\nx2,2020-02-10,A1,no,Left\nx2,2020-02-10,A2,-,Left\n"
               "x2,2020-02-10,B1,yes,Right\nx2,2020-02-10,B2,yes,Right\n")


def _files(folder: Path) -> set[str]:
    return {p.name for p in folder.iterdir()}


def _hash(store: Path) -> str:
    with Store(store, read_only=True) as s:
        return s.content_hash()


def _choices(store: Path) -> dict[tuple[str, str], str]:
    with Store(store, read_only=True) as s:
        return {(b, m): c for b, m, c in s.rows("SELECT ballot_id, member_id, choice FROM votes")}


def test_dash_is_refused_until_mapped_and_every_code_is_summarised(run_cli, tmp_path):
    (tmp_path / "dash.csv").write_text(DASH)
    before = _files(tmp_path)
    proc = run_cli("ingest", "dash.csv", "--body", "Council")
    assert proc.returncode == 65, proc.stderr
    line, = proc.stderr.strip().splitlines()
    assert line.startswith("error: dash.csv, column 'vote': 1 vote code without a mapping: ")
    assert "'-' ×2 (first at dash.csv:3; refused until mapped" in line
    assert "--codes FILE" in line and 'codes = { "-" = ' in line
    assert _files(tmp_path) == before  # finding 11: no empty store, no lock file

    proc = run_cli("ingest", "dash.csv", "--body", "Council", "--check")
    assert proc.returncode == 65
    assert ("  codes in dash.csv: 'yes' → yes ×3, '-' → not mapped ×2, (blank) → absent ×1, "
            "'no' → no ×2") in proc.stdout
    assert _files(tmp_path) == before

    (tmp_path / "codes.csv").write_text("raw,choice\n-,absent\n")
    proc = run_cli("ingest", "dash.csv", "--body", "Council", "--codes", "codes.csv", check=True)
    assert ("  codes in dash.csv: 'yes' → yes ×3, '-' → absent ×2, (blank) → absent ×1, "
            "'no' → no ×2") in proc.stdout
    votes = _choices(tmp_path / "blocwatch.duckdb")
    assert votes[("x1", "A2")] == votes[("x2", "A2")] == "absent"
    assert votes[("x1", "B1")] == "absent"  # the one rule for blank cells


def test_check_on_an_existing_store_changes_nothing(run_cli, tmp_path):
    (tmp_path / "dash.csv").write_text(DASH)
    (tmp_path / "codes.csv").write_text("raw,choice\n-,no\n")
    run_cli("ingest", "dash.csv", "--body", "Council", "--codes", "codes.csv", check=True)
    store = tmp_path / "blocwatch.duckdb"
    (tmp_path / "more.csv").write_text(DASH.replace("x", "y").replace(",-,", ",0,"))
    before, files = _hash(store), _files(tmp_path)
    proc = run_cli("ingest", "more.csv", "--body", "Council")
    assert proc.returncode == 65
    assert "'0' ×2 (first at more.csv:3; refused until mapped" in proc.stderr
    assert _hash(store) == before and _files(tmp_path) == files


def test_inline_codes_table_from_init_works_for_ingest_and_rebuild(run_cli, tmp_path):
    run_cli("init", "--body", "Moorkamp Board", ".", check=True)
    cfg = tmp_path / "blocwatch.toml"
    text = cfg.read_text()
    assert '# codes = { Aye = "yes"' in text  # the form init suggests
    text = text.replace("# codes = { Aye", "codes = { Aye").replace(
        'members = "data/roster.csv"', '# members = "data/roster.csv"')
    text = text.replace('codes = { Aye = "yes", Nay = "no", Abs = "abstain" }',
                        'codes = { Ja = "yes", Nein = "no", Abs = "abstain" }')
    cfg.write_text(text)
    votes = DASH.replace(",yes,", ",Ja,").replace(",no,", ",Nein,").replace(",-,", ",Abs,")
    (tmp_path / "data" / "votes-2020.csv").write_text(votes)

    proc = run_cli("ingest", "data/votes-2020.csv", check=True)  # one body: it is the default
    assert ("codes in data/votes-2020.csv: 'Ja' → yes ×3, 'Abs' → abstain ×2, (blank) → "
            "absent ×1, 'Nein' → no ×2") in proc.stdout
    ingested = _choices(tmp_path / "blocwatch.duckdb")
    (tmp_path / "blocwatch.duckdb").unlink()
    (tmp_path / "blocwatch.duckdb.lock").unlink()
    proc = run_cli("rebuild", "--bootstrap", "0", "--permutations", "0", "--no-report",
                   check=True)
    assert _choices(tmp_path / "blocwatch.duckdb") == ingested
    # the rebuild says what each code became too, right under the file it loaded
    loaded = tmp_path.resolve() / "data" / "votes-2020.csv"
    lines = proc.stdout.splitlines()
    at = lines.index(f"loaded: {loaded} (new)")
    assert lines[at + 1] == (f"  codes in {loaded}: 'Ja' → yes ×3, 'Abs' → abstain ×2, "
                             "(blank) → absent ×1, 'Nein' → no ×2")
    assert ingested[("x1", "A2")] == "abstain" and ingested[("x2", "A1")] == "no"


def test_body_named_among_several_uses_its_own_table(run_cli, tmp_path):
    (tmp_path / "blocwatch.toml").write_text(
        '[bodies."North Board"]\nsources = ["n/*.csv"]\ncodes = { Ja = "yes", Nein = "no" }\n'
        '[bodies."South Board"]\nsources = ["s/*.csv"]\ncodes = { Oui = "yes", Non = "no" }\n')
    (tmp_path / "v.csv").write_text(DASH.replace(",yes,", ",Oui,").replace(",no,", ",Non,")
                                    .replace(",-,", ",Oui,"))
    proc = run_cli("ingest", "v.csv", "--body", "South Board", check=True)
    assert "'Oui' → yes ×5" in proc.stdout
    proc = run_cli("ingest", "v.csv", "--body", "North Board")
    assert proc.returncode == 65 and "2 unknown vote codes: 'Oui' ×5" in proc.stderr


def test_rebuild_names_the_config_table_for_an_unmapped_dash(run_cli, tmp_path):
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / "v.csv").write_text(DASH)
    (tmp_path / "blocwatch.toml").write_text('[bodies."Heath Board"]\nsources = ["data/*.csv"]\n')
    proc = run_cli("rebuild", "--no-report", "--bootstrap", "0", "--permutations", "0")
    assert proc.returncode == 65
    assert "'-' ×2 (first at" in proc.stderr
    assert 'set codes = { "-" = "yes|no|abstain|absent" } in [bodies."Heath Board"] of ' \
        in proc.stderr
