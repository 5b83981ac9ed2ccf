"""Real builds through the CLI, then the pages they give: the verdict a small board gets, and no
figure on any page that contradicts itself.

Two invented bodies, voting by the spatial model of ``tests/spatial_sim.py`` (own generator):
a 9-member board with 12 motions a year, and a 40-member council with 60 a year whose groups
drift apart. Every number is read from the written pages and the export, never typed here.
"""

import csv
import io
import re
import shutil
import subprocess
import sys
from datetime import date, timedelta

import pandas as pd
import pytest

from blocwatch.dashboards.charts.chart import slug
from blocwatch.metrics.registry import ABSTAIN, NO, YES
from tests.spatial_sim import spatial_votes

BOARD, COUNCIL = "Saltmere Harbour Board", "Council of Vell Reach"
CODES = {YES: "yes", NO: "no", ABSTAIN: "abstain"}
CLI = ([shutil.which("blocwatch")] if shutil.which("blocwatch")
       else [sys.executable, "-c", "from blocwatch.pipeline.cli.main import main; main()"])
NUM = r"[−-]?\d[\d,]*(?:\.\d+)?"
ESTIMATE = re.compile(rf"({NUM}) \((?:95 % interval )?({NUM}) to ({NUM})\)")


def _write_body(writer, body, *, n, ballots, years, separations, seed):
    for k, (year, sep) in enumerate(zip(range(2019, 2019 + years), separations)):
        # The generator halves an even count into two groups; an odd body drops its last member.
        votes, _, groups = spatial_votes(n + n % 2, ballots, separation=sep, seed=seed + k)
        votes, groups = votes[:n], groups[:n]
        start = date(year, 1, 10)
        for b in range(ballots):
            day = (start + timedelta(days=b * 300 // ballots)).isoformat()
            for i in range(n):
                if votes[i, b] in CODES:
                    writer.writerow([body, f"{year}-{b:03d}", day, f"{slug(body)[:4]}-{i:02d}",
                                     CODES[votes[i, b]], ("Tidewater", "Moorland")[groups[i]]])


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    root = tmp_path_factory.mktemp("honesty")
    path = root / "votes.csv"
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["body", "ballot_id", "date", "member_id", "vote", "group"])
        _write_body(w, BOARD, n=9, ballots=12, years=3, separations=(1.0, 2.0, 3.0), seed=11)
        _write_body(w, COUNCIL, n=40, ballots=60, years=4, separations=(0.3, 0.8, 1.6, 2.6),
                    seed=31)

    def run(*args):
        proc = subprocess.run([*CLI, *map(str, args)], cwd=root, capture_output=True,
                              text=True, timeout=900)
        assert proc.returncode == 0, f"{args}\n{proc.stdout}\n{proc.stderr}"
        return proc.stdout

    run("ingest", path, "--store", "s.duckdb")
    run("build", "--store", "s.duckdb", "--bootstrap", 60, "--permutations", 40,
        "--expensive-replicates", 20)
    run("report", "--store", "s.duckdb", "--out", "report")
    metrics = pd.read_csv(io.StringIO(run("export", "--store", "s.duckdb", "--table",
                                          "metrics")))
    pages = {b: (root / "report" / f"briefing-{slug(b)}.html").read_text()
             for b in (BOARD, COUNCIL)}
    pages["comparison"] = (root / "report" / "comparison.html").read_text()
    return pages, metrics


def _number(text: str) -> float:
    return float(text.replace("−", "-").replace(",", ""))


def _text(html: str) -> str:
    """The page's visible text (chart data blocks and scripts removed)."""
    html = re.sub(r"<script.*?</script>", " ", html, flags=re.S)
    return re.sub(r"<[^>]+>", " ", html).replace("&#x27;", "'").replace("&amp;", "&")


def test_the_nine_member_board_gets_too_little_data(built):
    pages, metrics = built
    board = metrics[metrics.body == BOARD]
    assert board.n_members.max() <= 9  # the export confirms the board is that small
    kind = pages[BOARD].split("data-verdict='", 1)[1].split("'", 1)[0]
    assert kind == "too little data"
    verdict = _text(pages[BOARD].split("<p class='bw-headline'", 1)[1].split("</p>", 1)[0])
    assert "too little data to tell" in verdict and "fewer than 15" in verdict


def test_the_council_gets_a_verdict_on_its_numbers(built):
    pages, metrics = built
    kind = pages[COUNCIL].split("data-verdict='", 1)[1].split("'", 1)[0]
    assert kind in ("clear rise", "clear fall", "no clear change")
    gm = metrics[(metrics.body == COUNCIL) & (metrics.metric == "group_modularity")]
    first = gm.sort_values("period_start").iloc[0]
    verdict = _text(pages[COUNCIL].split("<p class='bw-headline'", 1)[1].split("</p>", 1)[0])
    assert f"{first.value:.2f}".replace("-", "−") in verdict


@pytest.mark.parametrize("page", [BOARD, COUNCIL, "comparison"])
def test_no_estimate_is_printed_outside_its_interval(built, page):
    text = _text(built[0][page])
    found = ESTIMATE.findall(text)
    if page != "comparison":
        assert found, "the property below must have something to check"
    for x, a, b in found:
        x, a, b = _number(x), _number(a), _number(b)
        assert a <= x <= b, (x, a, b)
        assert a < b, f"a flat interval printed as one: {a} to {b}"


@pytest.mark.parametrize("page", [BOARD, COUNCIL])
def test_no_flat_interval_without_a_caution(built, page):
    html = built[0][page]
    text = _text(html)
    assert not re.search(rf"\[({NUM})[–-]\1\]", text)  # no "[1.00–1.00]"
    flat = "no spread across resamples" in text
    if flat:
        assert "<p class='bw-caution'>Some intervals on this page show no spread" in html


@pytest.mark.parametrize("page", [BOARD, COUNCIL])
def test_wording_reads_right(built, page):
    text = _text(built[0][page])
    assert not re.search(r"\b1 (periods|members|ballots)\b", text)
    assert not re.search(r"\b([02-9]|\d\d+) period\b(?!s)", text)
    assert "±" not in text and "No description" not in text
    assert not re.search(r"(?<![\w–])-\d", text)  # a hyphen is never a minus sign
    assert " was " not in text.split("Reading these figures", 1)[0].split("Every measure")[0]


def test_numbers_tables_never_list_an_interval_that_leaves_out_its_value(built):
    html = built[0][COUNCIL] + built[0][BOARD]
    for table in re.findall(r"<table>.*?</table>", html, flags=re.S):
        head = re.findall(r"<th scope='col'>(.*?)</th>", table)
        if not {"Value", "Low", "High"} <= set(head):
            continue
        at = [head.index(c) for c in ("Value", "Low", "High")]
        for row in re.findall(r"<tr>(.*?)</tr>", table.split("<tbody>", 1)[1], flags=re.S):
            cells = re.findall(r"<td[^>]*>(.*?)</td>", row)
            v, lo, hi = (cells[i] for i in at)
            if lo and hi and v:
                assert _number(lo) <= _number(v) <= _number(hi), (v, lo, hi)
