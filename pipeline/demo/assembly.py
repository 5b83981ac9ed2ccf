"""An invented scenario for the demo: the Assembly of Marrow Sound, 2001–2025.

Nothing here describes a real body or real people. Forty-five seats are held by members of
three invented factions (Tideward League, Upland Compact, Lantern Circle). Each member has a
position on one axis; each ballot splits the axis at a random cut. Until 2012 the factions
overlap; in 2012 the two large ones move apart (the visible shift) and keep drifting. Some
members change faction, seats turn over at elections, and members are absent or abstain now
and then. Everything is drawn from one seed, so the demo is the same on every machine.

Every ballot has a topic. Harbour levies always split the factions sharply; the other topics
divide them less. From 2017 to 2020 the agenda turns to harbour levies (about two ballots in
three instead of one in four): the raw figures jump for those years while the agenda-standardised
series does not — the members did not change, the agenda did.
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from datetime import date, timedelta
from pathlib import Path

import numpy as np

BODY = "Assembly of Marrow Sound"
FACTIONS = ("Tideward League", "Upland Compact", "Lantern Circle")
FIRST_YEAR, LAST_YEAR, SHIFT_YEAR = 2001, 2025, 2012
SEATS, BALLOTS_PER_YEAR, ELECTION_EVERY = 45, 60, 4
# topic -> how strongly the axis decides a vote on it (1 = as before topics existed)
TOPICS = {"Harbour levies": 2.0, "Ferries and fisheries": 0.6}
PROCEDURAL_TOPIC = "Standing orders"
AGENDA_SHIFT = range(2017, 2021)  # years when harbour levies fill the agenda

_GIVEN = ("Avel", "Brisa", "Corran", "Dessa", "Elm", "Fenna", "Garrow", "Hesk", "Ilsa", "Jory",
          "Kestra", "Lune", "Marl", "Nessa", "Orrin", "Pell", "Quill", "Rask", "Sorrel", "Tamsin",
          "Ulla", "Vesk", "Wren", "Yarrow")
_FAMILY = ("Ashcombe", "Brindle", "Carrow", "Dunmere", "Estwick", "Fallow", "Greave", "Hollin",
           "Ivesdale", "Jessop", "Kettering", "Lowmarsh", "Morrow", "Nettle", "Oakhurst",
           "Penhallow", "Quarry", "Rooksby", "Saltmarsh", "Thorne", "Underhill", "Vellacott")
# How the clerk's files spell each choice: the loader must map them all.
_SPELLING = {"yes": ("Aye", "Y", "for"), "no": ("Nay", "N", "against"),
             "abstain": ("Abstain",), "absent": ("Absent", "not voting")}


@dataclass(frozen=True)
class DemoFiles:
    votes: Path
    roster: Path


def _separation(year: int) -> float:
    """Distance between the two large factions' centres: flat, a jump, then a drift."""
    if year < SHIFT_YEAR:
        return 0.6 + 0.02 * (year - FIRST_YEAR)
    return 1.6 + 0.05 * (year - SHIFT_YEAR)


def _topic_shares(year: int) -> list[float]:
    levies = 0.65 if year in AGENDA_SHIFT else 0.25
    return [levies, 1 - levies]


def generate(out_dir: str | Path, *, seed: int = 7) -> DemoFiles:
    """Write ``votes.csv`` (long layout) and ``roster.csv`` into ``out_dir``."""
    rng = np.random.default_rng(seed)
    topic_rng = np.random.default_rng(seed + 101)  # its own stream: the votes' draws stay put
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    roster_rows, vote_rows = [], []
    members: list[dict] = []  # seat holders now
    next_id = 1

    def new_member(year: int) -> dict:
        nonlocal next_id
        faction = int(rng.choice(3, p=[0.45, 0.42, 0.13]))
        m = {"id": f"M{next_id:03d}", "faction": faction, "since": date(year, 1, 1),
             "offset": float(rng.normal(0, 0.35)),
             "name": f"{rng.choice(_GIVEN)} {rng.choice(_FAMILY)}"}
        next_id += 1
        return m

    def close(m: dict, until: date) -> None:
        roster_rows.append([m["id"], m["name"], FACTIONS[m["faction"]], m["since"], until])

    for year in range(FIRST_YEAR, LAST_YEAR + 1):
        if year == FIRST_YEAR or (year - FIRST_YEAR) % ELECTION_EVERY == 0:
            keep = [m for m in members if rng.random() < 0.7]
            for m in members:
                if m not in keep:
                    close(m, date(year - 1, 12, 31))
            members = keep + [new_member(year) for _ in range(SEATS - len(keep))]
        # A few members change faction mid-year between the two large factions.
        if year in (2006, 2014, 2019):
            for m in rng.choice([m for m in members if m["faction"] < 2], size=2, replace=False):
                switch = date(year, 7, 1)
                close(m, switch - timedelta(days=1))
                m["faction"], m["since"] = 1 - m["faction"], switch
        sep = _separation(year)
        centre = np.array([-sep / 2, sep / 2, 0.1])
        x = np.array([centre[m["faction"]] + m["offset"] for m in members])
        days = np.sort(rng.choice(np.arange(1, 360), size=BALLOTS_PER_YEAR, replace=False))
        for j, day in enumerate(days):
            held = date(year, 1, 1) + timedelta(days=int(day))
            ballot_id = f"{year}-{j + 1:03d}"
            procedural = rng.random() < 0.12  # near-unanimous business
            cut = rng.normal(0, 0.3) if not procedural else -4.0
            direction = 1.0 if rng.random() < 0.5 else -1.0
            topic = PROCEDURAL_TOPIC if procedural else \
                list(TOPICS)[int(topic_rng.choice(len(TOPICS), p=_topic_shares(year)))]
            weight = TOPICS.get(topic, 1.0)
            utility = direction * weight * (x - cut) + rng.normal(0, 0.5, size=len(x))
            choice = np.where(utility > 0, "yes", "no").astype(object)
            roll = rng.random(len(x))
            choice[roll < 0.03] = "abstain"
            choice[(roll >= 0.03) & (roll < 0.10)] = "absent"
            for m, c in zip(members, choice):
                raw = _SPELLING[c][int(rng.integers(len(_SPELLING[c])))]
                vote_rows.append([ballot_id, held.isoformat(), f"Motion {ballot_id}",
                                  topic, m["id"], raw])
    for m in members:
        close(m, date(LAST_YEAR, 12, 31))
    votes_path, roster_path = out / "votes.csv", out / "roster.csv"
    write_csv(votes_path, ["ballot_id", "date", "title", "topic", "member_id", "vote"],
              vote_rows)
    write_roster(roster_path, roster_rows)
    return DemoFiles(votes_path, roster_path)


def write_csv(path: Path, header: list[str], rows: list[list]) -> None:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)


def write_roster(path: Path, rows: list[list]) -> None:
    """A roster file (member_id, name, group, valid_from, valid_to), by member and start."""
    write_csv(path, ["member_id", "name", "group", "valid_from", "valid_to"],
              sorted(rows, key=lambda r: (r[0], r[3])))
