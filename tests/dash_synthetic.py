"""Invented result tables for the dashboards tests (fictional bodies, members and groups).

Numbers are drawn from a seeded generator: they only need to look like results, the tests read
the expected values back from these frames, never from constants.
"""

from __future__ import annotations

import itertools
import json

import numpy as np
import pandas as pd

from blocwatch.dashboards.tables import ReportTables
from blocwatch.pipeline.report.metric_list import metric_list

HARBOUR = "Harbour Board of Veldmark"
TARN = "Assembly of the Tarn Isles"
GROUPS = ("Tideward", "Quayside League", "Lantern Group")
EVIL_MEMBER = "<img src=x onerror=alert(1)>"
EVIL_GROUP = "</script><script>window.__pwned=1</script>"


def _periods(first: int, n: int, years: int) -> list[tuple[str, str, str]]:
    out = []
    for i in range(n):
        start = first + i * years
        name = str(start) if years == 1 else f"{start}–{start + years - 1}"
        out.append((name, f"{start}-01-01", f"{start + years - 1}-12-31"))
    return out


def _members(rng, body: str, groups, n: int, evil: bool):
    rows = []
    for i in range(n):
        group = groups[i % len(groups)]
        name = f"Member {chr(65 + i // 26)}{i % 26:02d} of {body.split()[-1]}"
        rows.append((f"{body[:3].lower()}-{i:03d}", name, group))
    if evil:
        rows[0] = (rows[0][0], EVIL_MEMBER, rows[0][2])
        rows[1] = (rows[1][0], rows[1][1], EVIL_GROUP)
    return rows


def body_frames(body: str, *, seed: int, n_periods: int, years: int, n_members: int,
                shift_at: int, intervals: bool, evil: bool, groups=GROUPS):
    rng = np.random.default_rng(seed)
    periods = _periods(2001, n_periods, years)
    people = _members(rng, body, groups, n_members, evil)
    metric_rows, member_rows, edge_rows, ga_rows = [], [], [], []
    for k, (period, start, end) in enumerate(periods):
        q = 0.05 + 0.004 * k + (0.12 if k >= shift_at else 0.0) + rng.normal(0, 0.005)
        values = {
            "group_modularity": q,
            "separability": min(1.0, 0.6 + 0.02 * k + rng.normal(0, 0.01)),
            "ei_index": -0.1 - 0.03 * k,
            "communities": float(2 + (k >= shift_at)),
            "novel_index": 10.0 + k,  # a metric the dashboards have never heard of
            "community_group_ari": np.nan if k == 0 else 0.5 + 0.02 * k,
        }
        for metric, v in values.items():
            has_iv = intervals and metric == "group_modularity"
            metric_rows.append({
                "body": body, "period": period, "period_start": start, "period_end": end,
                "metric": metric, "value": v, "low": v - 0.02 if has_iv else np.nan,
                "high": v + 0.02 if has_iv else np.nan,
                "null_mean": -0.01 if metric == "group_modularity" else np.nan,
                "n_members": n_members, "n_ballots": 40 + k,
                "note": "one group present" if np.isnan(v) else None, "run_id": "run-7"})
        pos = rng.normal(size=(n_members, 2))
        for i, (mid, name, group) in enumerate(people):
            pos[i, 0] += 3 * (groups.index(group) if group in groups else 0)
            for metric, v in (("cross_tie_share", rng.uniform(0, 0.6)),
                              ("participation", rng.uniform(0, 0.7)),
                              ("mds_1", pos[i, 0]), ("mds_2", pos[i, 1])):
                member_rows.append({"body": body, "period": period, "member_id": mid,
                                    "name": name, "group_name": group, "metric": metric,
                                    "value": v})
        for (a, _, ga), (b, _, gb) in itertools.combinations(people, 2):
            base = 0.85 if ga == gb else 0.55 - 0.01 * k
            edge_rows.append({"body": body, "period": period, "member_a": a, "member_b": b,
                              "agreement": float(np.clip(base + rng.normal(0, 0.05), 0, 1))})
        present = sorted({p[2] for p in people})
        for ga, gb in itertools.combinations_with_replacement(present, 2):
            ga_rows.append({"body": body, "period": period, "group_a": ga, "group_b": gb,
                            "agreement": 0.85 if ga == gb else 0.5 - 0.01 * k, "n_pairs": 20})
    trends = [{"body": body, "metric": "group_modularity", "n_periods": n_periods,
               "mk_s": 40.0, "mk_z": 3.1, "mk_p": 0.0004, "tau": 0.71, "slope": 0.0112,
               "slope_low": 0.007, "slope_high": 0.016,
               "change_points": json.dumps([periods[shift_at][0]]), "note": None}]
    return (pd.DataFrame(metric_rows), pd.DataFrame(member_rows), pd.DataFrame(ga_rows),
            pd.DataFrame(trends), pd.DataFrame(edge_rows))


def make_tables(*, evil: bool = False, two_bodies: bool = True, n_members: int = 12,
                n_periods: int = 10) -> ReportTables:
    """A report's tables: Harbour (yearly, with intervals) and Tarn (two-year terms, none)."""
    frames = [body_frames(HARBOUR, seed=1, n_periods=n_periods, years=1, n_members=n_members,
                          shift_at=n_periods // 2, intervals=True, evil=evil)]
    if two_bodies:
        frames.append(body_frames(TARN, seed=2, n_periods=max(3, n_periods // 2), years=2,
                                  n_members=n_members - 3, shift_at=2, intervals=False,
                                  evil=False, groups=GROUPS[:2]))
    parts = [pd.concat(f, ignore_index=True) for f in zip(*frames)]
    return ReportTables(metrics=parts[0], members=parts[1], group_agreement=parts[2],
                        measures=metric_list(),
                        trends=parts[3], edges=parts[4],
                        provenance={"data_fingerprint": "sha256:0f3c…", "run_id": "run-7",
                                    "parameters": {"rule": "weighted", "seed": 0},
                                    "run_time": "2025-01-01T12:00:00Z"})
