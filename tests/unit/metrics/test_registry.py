"""One invariance suite over every registered metric family (sklearn-style common checks).

Written against :data:`FAMILIES`, so families registered later are covered without editing
this file. Every family must:

- return exactly the metrics it declares, each finite and inside its bounds, or missing with
  a note (random inputs, with and without pairs that shared no ballot);
- give the same values when group ids are permuted;
- give the same values when members are listed in another order (all arrays permuted
  consistently). A family whose result genuinely depends on member order may opt out by
  setting ``func.member_order_dependent = "<why>"`` on its registered function; it is then
  checked for group relabelling only. (The Louvain and cross-validation families do not opt
  out: they put members in a canonical order before any seeded step.)
- answer one-group and empty (n = 0) inputs with missing values and notes, never an
  exception; with one group a metric may keep a value only if it ignores the labels;
- raise ``ValueError`` from ``blocwatch.metrics.validation`` for NaN labels.
"""

import dataclasses
import math

import numpy as np
import pytest

from blocwatch.metrics.registry import (
    ABSTAIN,
    FAMILIES,
    MISSING,
    NO,
    YES,
    MetricValue,
    PeriodInput,
    compute_all,
    metric_names,
)

# The export contract (metrics/registry.py: add names, never rename): exported metric names,
# first ones in this order.
CONTRACT_NAMES = ["group_modularity", "best_modularity", "communities", "community_group_ari",
                "cross_group_share", "cross_group_ratio", "ei_index", "separability",
                "silhouette"]
SEEDS = range(5)


def make_input(seed: int, *, n: int | None = None, k: int | None = None,
               gaps: bool = False) -> PeriodInput:
    """A random period: members on a line by group, noisy yes/no/abstain votes, absences,
    and 1–5 scores on as many scored ballots (every optional field filled, so families that
    declare ``needs`` run too). Always more ballots than members."""
    rng = np.random.default_rng(seed)
    n = int(rng.integers(8, 26)) if n is None else n
    k = int(rng.integers(2, 5)) if k is None else k
    b = n + int(rng.integers(4, 30))
    labels = rng.permutation(np.arange(n) % k)
    pos = labels * rng.uniform(0.0, 2.0) + rng.normal(size=n)
    cut = rng.normal(size=b) * 2
    p_yes = 1 / (1 + np.exp(-(pos[:, None] * rng.choice([-1, 1], b) - cut)))
    votes = np.where(rng.random((n, b)) < p_yes, YES, NO).astype(np.int8)
    votes[rng.random((n, b)) < 0.05] = ABSTAIN
    votes[rng.random((n, b)) < 0.15] = MISSING
    if gaps:  # members 0 and 1 never sit on the same ballot: their agreement is NaN
        votes[0, b // 2:] = MISSING
        votes[1, : b // 2] = MISSING
    cast = (votes != MISSING).astype(float)
    same = sum(((votes == c).astype(float) @ (votes == c).T) for c in (YES, NO, ABSTAIN))
    shared = cast @ cast.T
    with np.errstate(invalid="ignore", divide="ignore"):
        agreement = np.where(shared > 0, same / shared, np.nan)
    np.fill_diagonal(agreement, 1.0)
    has = ~np.isnan(agreement) & ~np.eye(n, dtype=bool)
    weights = np.where(has, agreement, 0.0)
    threshold = np.quantile(agreement[has], 0.6) if has.any() else 1.0
    edges = has & (agreement >= threshold)
    scores = np.clip(np.round(3 + pos[:, None] + rng.normal(size=(n, b))), 1, 5)
    scores[votes == MISSING] = np.nan
    level = ("nominal", "ordinal", "interval")[seed % 3]
    return PeriodInput(agreement=agreement, shared=shared.astype(np.int64), labels=labels,
                       weights=weights, edges=edges, votes=votes, seed=seed, scores=scores,
                       score_level=level)


# Member × member fields; every other array field of PeriodInput has one row per member.
SQUARE = {"agreement", "shared", "weights", "edges"}


def permute_members(inp: PeriodInput, perm: np.ndarray) -> PeriodInput:
    changes = {}
    for f in dataclasses.fields(inp):
        x = getattr(inp, f.name)
        if isinstance(x, np.ndarray):
            changes[f.name] = x[np.ix_(perm, perm)] if f.name in SQUARE else x[perm]
    return dataclasses.replace(inp, **changes)


def with_labels(inp: PeriodInput, labels) -> PeriodInput:
    return dataclasses.replace(inp, labels=np.asarray(labels))


def empty_input() -> PeriodInput:
    z = np.zeros((0, 0))
    return PeriodInput(agreement=z, shared=z.astype(np.int64), labels=np.zeros(0, np.int64),
                       weights=z, edges=z.astype(bool), votes=np.zeros((0, 5), np.int8),
                       scores=np.zeros((0, 5)), score_level="interval")


def same_value(a: MetricValue, b: MetricValue) -> bool:
    if a.value is None or b.value is None:
        return a.value is None and b.value is None
    return math.isclose(a.value, b.value, rel_tol=1e-9, abs_tol=1e-12)


def assert_same(fam, x: dict, y: dict, what: str):
    for m in fam.metrics:
        assert same_value(x[m], y[m]), f"{fam.name}.{m} changed under {what}: {x[m]} vs {y[m]}"


FAMILY_NAMES = list(FAMILIES)


def test_design_names_come_first_in_order():
    assert metric_names()[: len(CONTRACT_NAMES)] == CONTRACT_NAMES  # the export contract


def test_declarations_are_consistent():
    names = metric_names()
    assert len(names) == len(set(names)), "a metric name is declared by two families"
    for fam in FAMILIES.values():
        assert set(fam.bounds) <= set(fam.metrics), fam.name
        assert set(fam.permutation_null) <= set(fam.metrics), fam.name
        for lo, hi in fam.bounds.values():
            assert lo <= hi


def test_compute_all_gives_every_metric():
    out = compute_all(make_input(0))
    assert list(out) == metric_names()
    # a family is left out, not failed, where an optional field it needs is absent
    bare = compute_all(dataclasses.replace(make_input(0), scores=None, score_level=None))
    kept = [f for f in FAMILIES.values() if "scores" not in getattr(f, "needs", ())]
    assert list(bare) == [m for fam in kept for m in fam.metrics]
    assert all(isinstance(v, MetricValue) for v in out.values())


@pytest.mark.parametrize("name", FAMILY_NAMES)
@pytest.mark.parametrize("seed", SEEDS)
@pytest.mark.parametrize("gaps", [False, True])
def test_bounds_hold_on_random_inputs(name, seed, gaps):
    fam = FAMILIES[name]
    out = fam.func(make_input(seed, gaps=gaps))
    assert set(out) == set(fam.metrics)
    for m, v in out.items():
        if v.value is None:
            assert v.note, f"{name}.{m} is missing without a note"
            continue
        assert math.isfinite(v.value), f"{name}.{m} = {v.value}"
        lo, hi = fam.bounds.get(m, (-math.inf, math.inf))
        assert lo - 1e-12 <= v.value <= hi + 1e-12, f"{name}.{m} = {v.value} not in {lo, hi}"


@pytest.mark.parametrize("name", FAMILY_NAMES)
def test_random_inputs_give_values(name):
    # not everything may be missing on ordinary data, or the suite would prove nothing
    fam = FAMILIES[name]
    outs = [fam.func(make_input(seed)) for seed in SEEDS]
    for m in fam.metrics:
        assert any(o[m].ok for o in outs), f"{name}.{m} is never computed on random inputs"


@pytest.mark.parametrize("name", FAMILY_NAMES)
@pytest.mark.parametrize("seed", SEEDS)
def test_relabelling_groups_changes_nothing(name, seed):
    fam = FAMILIES[name]
    inp = make_input(seed)
    k = int(inp.labels.max()) + 1
    ids = np.random.default_rng(seed).permutation(k)
    if (ids == np.arange(k)).all():
        ids = ids[::-1].copy()
    assert_same(fam, fam.func(inp), fam.func(with_labels(inp, ids[inp.labels])),
                "relabelled groups")
    # ids need not be contiguous either
    assert_same(fam, fam.func(inp), fam.func(with_labels(inp, 10 + 3 * inp.labels)),
                "spread-out group ids")


@pytest.mark.parametrize("name", FAMILY_NAMES)
@pytest.mark.parametrize("seed", SEEDS)
def test_permuting_members_changes_nothing(name, seed):
    fam = FAMILIES[name]
    why = getattr(fam.func, "member_order_dependent", None)
    if why:
        pytest.skip(f"{name} depends on member order: {why}")
    inp = make_input(seed, gaps=seed % 2 == 1)
    perm = np.random.default_rng(100 + seed).permutation(inp.n)
    assert_same(fam, fam.func(inp), fam.func(permute_members(inp, perm)), "member order")


@pytest.mark.parametrize("name", FAMILY_NAMES)
@pytest.mark.parametrize("seed", SEEDS[:3])
def test_one_group_gives_missing_or_label_free_values(name, seed):
    fam = FAMILIES[name]
    inp = make_input(seed)
    one = fam.func(with_labels(inp, np.zeros(inp.n, np.int64)))
    grouped = fam.func(inp)
    for m in fam.metrics:
        if one[m].value is None:
            assert one[m].note, f"{name}.{m}: missing without a note"
        else:  # allowed only for a metric that does not look at the labels at all
            assert same_value(one[m], grouped[m]), \
                f"{name}.{m} gives a group-based value {one[m].value} for one group"


@pytest.mark.parametrize("name", FAMILY_NAMES)
def test_empty_input_gives_missing_with_note(name):
    fam = FAMILIES[name]
    out = fam.func(empty_input())
    assert set(out) == set(fam.metrics)
    for m, v in out.items():
        assert v.value is None and v.note, f"{name}.{m} on n = 0: {v}"


@pytest.mark.parametrize("name", FAMILY_NAMES)
def test_nan_labels_raise_from_validation(name):
    fam = FAMILIES[name]
    inp = make_input(0)
    labels = inp.labels.astype(float)
    labels[3] = np.nan
    with pytest.raises(ValueError, match="labels") as info:
        fam.func(with_labels(inp, labels))
    files = [str(entry.path) for entry in info.traceback]
    assert any(f.endswith("validation.py") for f in files), files[-1]


@pytest.mark.parametrize("name", FAMILY_NAMES)
def test_deterministic_for_a_seed(name):
    fam = FAMILIES[name]
    assert_same(fam, fam.func(make_input(3)), fam.func(make_input(3)), "a repeated call")
