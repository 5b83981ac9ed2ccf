"""The invented review panel (1–9 scores) through the real CLI: ingest → build → export →
report, plus scale declarations in the other layouts and refused answers."""

import csv
from datetime import date

import numpy as np
import pandas as pd
import pytest

from blocwatch.pipeline.build.matrices import load_votes
from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.demo import panel as demo_panel
from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.store.database import Store

# 20 replicates: the fewest that still store an interval
# (metrics.uncertainty.intervals.MIN_REPLICATES).
FAST = ("--bootstrap", 20, "--permutations", 10, "--expensive-replicates", 3)


@pytest.fixture(scope="module")
def panel(tmp_path_factory):
    return demo_panel.generate(tmp_path_factory.mktemp("panel"), seed=11)


def _export_table(path, table: str = "metrics") -> pd.DataFrame:
    from blocwatch.pipeline.report.export import export_frame

    with Store(path, read_only=True) as store:
        return export_frame(store, table)


_metrics = _export_table


def _ingest(path, *files, **options):
    """The library call the CLI makes (in-process: no interpreter start-up per test)."""
    from blocwatch.pipeline.ingest.load import ingest_files

    with Store(path) as store:
        return ingest_files(store, [str(f) for f in files], **options)


def test_panel_demo_end_to_end(run_cli, tmp_path, panel):
    run_cli("ingest", panel.votes, "--members", panel.roster, "--body", panel.body,
            "--store", "panel.duckdb", check=True)
    with Store(tmp_path / "panel.duckdb", read_only=True) as store:
        scales = store.df("SELECT DISTINCT scale, scale_min, scale_max FROM ballots")
        votes = store.df("SELECT choice, score, raw FROM votes")
    assert scales.to_dict("records") == [{"scale": "ordinal", "scale_min": 1.0,
                                          "scale_max": 9.0}]
    scored = votes[votes["choice"] != "abstain"]
    assert scored["score"].between(1, 9).all() and (scored["choice"] == scored["raw"]).all()
    assert votes.loc[votes["choice"] == "abstain", "score"].isna().all()

    run_cli("build", "--store", "panel.duckdb", *FAST, check=True)
    metrics = _metrics(tmp_path / "panel.duckdb")
    wide = metrics.pivot(index="period", columns="metric", values="value").sort_index()
    assert len(wide) == 12
    early, late = wide.iloc[:4], wide.iloc[-4:]
    # Two schools form: the panel agrees less overall, each school agrees with itself.
    assert late["krippendorff_alpha"].mean() < early["krippendorff_alpha"].mean() - 0.2
    assert (late["krippendorff_alpha_within"] > late["krippendorff_alpha"] + 0.3).all()
    assert late["group_modularity"].mean() > early["group_modularity"].mean() + 0.05
    assert metrics.loc[metrics["metric"] == "krippendorff_alpha", "low"].notna().all()
    # Per-group alpha (diagonal of the groups table): each large section agrees with itself
    # late on far more than the panel as a whole does.
    groups = _export_table(tmp_path / "panel.duckdb", "groups")
    diag = groups[(groups["group_a"] == groups["group_b"]) & (groups["period"] == "2025")]
    own = diag.set_index("group_a")["alpha"]
    panel_alpha = wide.loc["2025", "krippendorff_alpha"]
    assert (own[["Field Studies", "Modelling"]] > panel_alpha + 0.3).all()
    assert groups.loc[groups["group_a"] != groups["group_b"], "alpha"].isna().all()

    report = run_cli("report", "--store", "panel.duckdb", "--out", "report", check=True)
    pages = list((tmp_path / "report").rglob("*.html"))
    assert pages and "page:" in report.stdout
    assert any(panel.body in p.read_text(encoding="utf-8") for p in pages)
    # The folder carries plotly.js once; --single-file puts it inside each page instead.
    library = (tmp_path / "report" / "plotly.min.js").stat().st_size
    top = [p for p in pages if p.parent == tmp_path / "report" and p.name != "index.html"]
    assert all(p.stat().st_size < library / 5 for p in top)
    run_cli("report", "--store", "panel.duckdb", "--out", "alone", "--single-file", check=True)
    assert not (tmp_path / "alone" / "plotly.min.js").exists()
    assert all((tmp_path / "alone" / p.name).stat().st_size > library for p in top)


def test_stored_agreement_is_one_minus_scaled_distance(run_cli, tmp_path, panel):
    """Read back from the store, a pair's agreement is the mean over shared proposals of
    1 − |a − b| / 8 [D, per-pair definition], computed here from the file itself."""
    from blocwatch.pipeline.build.scored_agreement import scored_agreement
    from blocwatch.pipeline.options import AgreementOptions

    _ingest(tmp_path / "p.duckdb", panel.votes, members=panel.roster, body=panel.body)
    with Store(tmp_path / "p.duckdb", read_only=True) as store:
        period = make_periods("year", date(2023, 1, 1), date(2023, 12, 31))[0]
        vm = load_votes(store, panel.body, period)
    a, _ = scored_agreement(vm.votes, vm.scales, AgreementOptions(min_shared=1))
    rows = pd.read_csv(panel.votes, dtype=str)
    rows = rows[rows["date"].str.startswith("2023") & (rows["score"] != "abstain")]
    grid = rows.pivot(index="member_id", columns="ballot_id", values="score").astype(float)
    grid = grid.reindex(index=list(vm.member_ids), columns=list(vm.ballot_ids))
    for i, j in [(0, 1), (2, 7), (5, 11)]:
        both = grid.iloc[i].notna() & grid.iloc[j].notna()
        expected = 1 - np.mean(np.abs(grid.iloc[i][both] - grid.iloc[j][both]) / 8)
        assert a[i, j] == pytest.approx(expected, abs=1e-12)


def _write(path, header, rows):
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)
    return path


def test_out_of_range_answer_is_refused_with_its_place(run_cli, tmp_path):
    votes = _write(tmp_path / "s.csv", ["ballot_id", "date", "member_id", "score", "group"],
                   [["P1", "2021-03-01", "R1", "4", "A"], ["P1", "2021-03-01", "R2", "12", "B"]])
    proc = run_cli("ingest", votes, "--body", "Panel", "--scale", "ordinal:1..9",
                   "--store", "s.duckdb")
    assert proc.returncode == 65
    assert "12" in proc.stderr and "1..9" in proc.stderr and "s.csv:3" in proc.stderr
    # Nothing was written: a failed first load leaves no store (and no lock file) behind.
    assert not (tmp_path / "s.duckdb").exists()
    assert not (tmp_path / "s.duckdb.lock").exists()


def test_categorical_scale_in_a_ballots_file(run_cli, tmp_path):
    votes = _write(tmp_path / "v.csv", ["ballot_id", "member_id", "vote", "group"],
                   [["B1", "M1", "Fund", "A"], ["B1", "M2", "defer", "B"],
                    ["B2", "M1", "yes", "A"], ["B2", "M2", "no", "B"]])
    ballots = _write(tmp_path / "b.csv", ["ballot_id", "date", "scale", "options"],
                     [["B1", "2021-01-05", "categorical", "Fund|Defer|Decline"],
                      ["B2", "2021-01-06", "", ""]])
    _ingest(tmp_path / "b.duckdb", votes, ballots=ballots, body="Board")
    with Store(tmp_path / "b.duckdb", read_only=True) as store:
        got = store.df("SELECT ballot_id, member_id, choice, score FROM votes ORDER BY ALL")
        kinds = dict(store.rows("SELECT ballot_id, scale FROM ballots"))
    assert kinds == {"B1": "categorical", "B2": "binary"}
    assert got["choice"].tolist() == ["Fund", "Defer", "yes", "no"]
    assert got["score"].tolist()[:2] == [0.0, 1.0]
    bad = _write(tmp_path / "v2.csv", ["ballot_id", "member_id", "vote", "group"],
                 [["B3", "M1", "maybe", "A"]])
    ballots2 = _write(tmp_path / "b2.csv", ["ballot_id", "date", "scale"],
                      [["B3", "2021-02-01", "categorical:Fund|Defer"]])
    with pytest.raises(BadInputError, match="not one of the options") as info:
        _ingest(tmp_path / "b.duckdb", bad, ballots=ballots2, body="Board")
    assert info.value.exit_code == 65 and "'maybe'" in str(info.value)


def test_wide_sheet_with_a_scale_row(run_cli, tmp_path):
    sheet = _write(tmp_path / "w.csv", ["member_id", "group", "P1", "P2", "P3"],
                   [["date", "", "2022-02-01", "2022-02-02", "2022-02-03"],
                    ["scale", "", "ordinal:1..5", "ordinal:1..5", "continuous:0..1000"],
                    ["R1", "A", "1", "2", "250"], ["R2", "A", "2", "2", "300"],
                    ["R3", "B", "5", "", "900"]])
    _ingest(tmp_path / "w.duckdb", sheet, layout="wide", body="Wide panel")
    with Store(tmp_path / "w.duckdb", read_only=True) as store:
        kinds = store.df("SELECT ballot_id, scale, scale_min, scale_max FROM ballots "
                         "ORDER BY ballot_id")
        scores = store.df("SELECT ballot_id, member_id, choice, score FROM votes "
                          "ORDER BY ALL")
    assert kinds["scale"].tolist() == ["ordinal", "ordinal", "continuous"]
    assert kinds["scale_max"].tolist() == [5.0, 5.0, 1000.0]
    r3 = scores[scores["member_id"] == "R3"].set_index("ballot_id")
    assert r3.loc["P2", "choice"] == "absent" and np.isnan(r3.loc["P2", "score"])
    assert r3.loc["P3", "score"] == 900.0


def test_kappa_option_on_a_yes_no_body(run_cli, tmp_path):
    """--agreement kappa on an ordinary yes/no body: group modularity of the graph weighted by
    max(κ, 0), κ from scikit-learn per pair and Q from networkx [S: sklearn
    cohen_kappa_score; networkx modularity]."""
    import networkx as nx
    from sklearn.metrics import cohen_kappa_score

    rng = np.random.default_rng(5)
    n, b = 8, 30
    lean = np.where(np.arange(n) < 4, 1, -1)
    side = np.where(rng.random(b) < 0.5, 1, -1)
    yes = (lean[:, None] * side[None, :] + rng.normal(0, 0.9, (n, b))) > 0
    rows = [[f"v{j}", f"2020-01-{j + 1:02d}", f"M{i}", "Y" if yes[i, j] else "N", "AB"[i >= 4]]
            for j in range(b) for i in range(n)]
    votes = _write(tmp_path / "yn.csv", ["ballot_id", "date", "member_id", "vote", "group"],
                   rows)
    _ingest(tmp_path / "k.duckdb", votes, body="Council")
    run_cli("build", "--store", "k.duckdb", "--agreement", "kappa", "--bootstrap", 0,
            "--permutations", 0, "--keep-unanimous", "--min-share-cast", 0, check=True)
    metrics = _metrics(tmp_path / "k.duckdb").set_index("metric")["value"]
    g = nx.Graph()
    for i in range(n):
        for j in range(i + 1, n):
            k = cohen_kappa_score(yes[i], yes[j], labels=[True, False])
            g.add_edge(i, j, weight=max(k, 0.0))
    expected = nx.community.modularity(g, [set(range(4)), set(range(4, n))], weight="weight")
    assert metrics["group_modularity"] == pytest.approx(expected, abs=1e-9)
    assert "krippendorff_alpha" not in metrics.index  # yes/no bodies get no alpha rows
