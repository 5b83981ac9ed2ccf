"""An invented review panel for the demo: the Brackenmoor Trust's grants panel, 2014–2025.

Nothing here describes a real body or real people. About two dozen reviewers from two
sections (Field Studies, Modelling) and a small Methods Desk score each year's proposals on a
1–9 scale. Every proposal has a quality everyone can see and an *approach* (field work versus
models). Until 2017 reviewers judge mostly on quality; from 2018 to 2022 each section comes to
prefer its own approach, so two schools of thought form and the panel's scores split along the
section line. Reviewers see about three quarters of the proposals, step aside (abstain) now
and then, and rotate off after a term. Everything is drawn from one seed.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta
from pathlib import Path

import numpy as np

from blocwatch.pipeline.demo.assembly import write_csv, write_roster

BODY = "Brackenmoor Trust Review Panel"
SECTIONS = ("Field Studies", "Modelling", "Methods Desk")
SCALE = "ordinal:1..9"
FIRST_YEAR, LAST_YEAR = 2014, 2025
SEATS, PROPOSALS_PER_YEAR, TERM_YEARS = 22, 36, 4
SEEN_SHARE, RECUSAL = 0.75, 0.03

_GIVEN = ("Aster", "Bram", "Calla", "Doran", "Eira", "Fenwick", "Greer", "Halden", "Ione",
          "Jessamy", "Kellan", "Linnet", "Moray", "Nell", "Oriel", "Perrin", "Rowan", "Sable",
          "Teodor", "Verity", "Wystan", "Yselle")
_FAMILY = ("Ambleside", "Barrowclough", "Coldharbour", "Delacourt", "Eskdale", "Farrant",
           "Gillow", "Harker", "Inchbold", "Juniper", "Kimber", "Larkspur", "Marwood",
           "Northcott", "Ormsby", "Pennock", "Redfern", "Stainton", "Tolland", "Wetherby")


@dataclass(frozen=True)
class PanelFiles:
    """What :func:`generate` wrote: load with
    ``ingest_files(store, [f.votes], body=BODY, members=f.roster)``."""

    votes: Path
    roster: Path
    body: str = BODY
    scale: str = SCALE


def preference(year: int) -> float:
    """How strongly a section member prefers the section's approach: weak, then a build-up
    from 2018 to 2022 (a logistic ramp), then steady."""
    return 0.15 + 1.6 / (1.0 + np.exp(-(year - 2020) * 1.4))


def generate(out_dir: str | Path, *, seed: int = 11) -> PanelFiles:
    """Write ``panel_scores.csv`` (long layout, with a ``scale`` column) and
    ``panel_roster.csv`` (reviewers' sections with dates) into ``out_dir``."""
    rng = np.random.default_rng(seed)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    roster_rows, score_rows = [], []
    seated: list[dict] = []
    next_id = 1

    def recruit(year: int) -> dict:
        nonlocal next_id
        section = int(rng.choice(3, p=[0.45, 0.45, 0.10]))
        r = {"id": f"R{next_id:02d}", "section": section, "since": date(year, 1, 1),
             "leaves": year + TERM_YEARS + int(rng.integers(0, 3)),
             "taste": float(rng.normal(0, 0.25)), "severity": float(rng.normal(0, 0.5)),
             "name": f"{rng.choice(_GIVEN)} {rng.choice(_FAMILY)}"}
        next_id += 1
        return r

    for year in range(FIRST_YEAR, LAST_YEAR + 1):
        for r in [r for r in seated if r["leaves"] <= year]:
            roster_rows.append([r["id"], r["name"], SECTIONS[r["section"]], r["since"],
                                date(year - 1, 12, 31)])
        seated = [r for r in seated if r["leaves"] > year]
        seated += [recruit(year) for _ in range(SEATS - len(seated))]
        pull = preference(year)
        sign = np.array([(-1.0, 1.0, 0.0)[r["section"]] for r in seated])
        lean = sign * pull + np.array([r["taste"] for r in seated])
        severity = np.array([r["severity"] for r in seated])
        days = np.sort(rng.choice(np.arange(20, 340), size=PROPOSALS_PER_YEAR, replace=False))
        for j, day in enumerate(days):
            quality = rng.normal(0, 1)
            approach = rng.uniform(-1, 1)  # −1 field work … +1 models
            latent = 5 + 1.4 * quality + 2.2 * lean * approach - severity \
                + rng.normal(0, 0.8, size=len(seated))
            scores = np.clip(np.rint(latent), 1, 9).astype(int)
            seen = rng.random(len(seated)) < SEEN_SHARE
            recused = rng.random(len(seated)) < RECUSAL
            pid = f"P{year}-{j + 1:02d}"
            held = (date(year, 1, 1) + timedelta(days=int(day))).isoformat()
            for r, s, looked, out_of_it in zip(seated, scores, seen, recused):
                if not looked:
                    continue  # not assigned this proposal: no row
                score_rows.append([pid, held, f"Proposal {pid}", r["id"],
                                   "abstain" if out_of_it else str(s), SCALE])
    for r in seated:
        roster_rows.append([r["id"], r["name"], SECTIONS[r["section"]], r["since"],
                            date(LAST_YEAR, 12, 31)])
    votes_path, roster_path = out / "panel_scores.csv", out / "panel_roster.csv"
    write_csv(votes_path, ["ballot_id", "date", "title", "member_id", "score", "scale"],
              score_rows)
    write_roster(roster_path, roster_rows)
    return PanelFiles(votes_path, roster_path)
