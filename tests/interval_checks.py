"""The stored-interval rule every build keeps, checked on exported metric rows (e2e tests)."""

import re

import numpy as np


def assert_no_silent_contradiction(rows):
    """Every row with an interval: low ≤ high; an estimate outside it has a note saying so; an
    interval without width has a "no spread" note (issue 12)."""
    has = rows[np.isfinite(rows["low"]) & np.isfinite(rows["high"])]
    assert len(has) > 0
    for _, r in has.iterrows():
        note = r["note"] if isinstance(r["note"], str) else ""
        assert r["low"] <= r["high"], r.to_dict()
        if not r["low"] - 1e-9 <= r["value"] <= r["high"] + 1e-9:
            # "outside its interval" (period rows) or "... its bootstrap interval" (topic rows)
            assert re.search(r"outside its (bootstrap )?interval", note), r.to_dict()
        if r["high"] - r["low"] <= 1e-12:
            assert "no spread" in note, r.to_dict()
    return has
