"""Every default, option set, spec grammar and choice list of a build, in one light module.

Pure Python on purpose (no numpy, pandas, scikit-learn, networkx): the CLI shows these in
``--help`` and ``blocwatch init``, and ``status`` and ``report`` read stored options back, all
without loading the computing stack. The build modules import from here; nothing re-exports it.

Period specs (``--period``):

``year`` (default)
    calendar years, named ``2001``.
``year:MM``
    years starting on the first of month ``MM``, named ``2001/02`` (for ``year:09``, September
    2001 to August 2002).
``terms:FILE``
    named terms from a CSV file with columns ``name,start,end`` (dates inclusive, ISO format);
    terms must not overlap.
``rolling:LEN:STEP``
    windows of ``LEN`` months moved ``STEP`` months at a time, e.g. ``rolling:24m:12m``
    (units ``m`` months or ``y`` years), starting on the first of the month of the first ballot;
    named ``2001-01..2002-12``.

Graph rule specs (``--rule``): ``weighted`` (default), ``threshold:X`` (0 < X ≤ 1),
``equal-likelihood``, ``backbone:ALPHA`` (0 < ALPHA < 1); what each draws is in
:mod:`blocwatch.pipeline.build.graphs`.
"""

from __future__ import annotations

import csv
import re
from dataclasses import asdict, dataclass, field
from datetime import date
from pathlib import Path

from blocwatch.pipeline.errors import BadInputError, UsageError

DEFAULT_STORE = "blocwatch.duckdb"
DEFAULT_OUTPUT = "blocwatch-report"
DEFAULT_PERIOD = "year"
DEFAULT_RULE = "weighted"
DEFAULT_SEED = 20240601
DEFAULT_BOOTSTRAP = 200
DEFAULT_PERMUTATIONS = 200
# Replicates and permutations for families marked expensive (Leiden, CV fits, IRT): each call
# costs milliseconds, so they get this many at most.
DEFAULT_EXPENSIVE_REPLICATES = 40
DEFAULT_MIN_SHARED = 5
DEFAULT_MIN_SHARE_CAST = 0.25
DEFAULT_LOPSIDED = 0.0
# Per-topic series: a topic needs this many counted ballots in a period to get a figure (fewer
# give agreement from a handful of votes; common practice, no published threshold).
DEFAULT_MIN_TOPIC_BALLOTS = 10
# Reference topic mix of the agenda-standardised series: "pooled" (every stored ballot of the
# body) or the name of one period.
DEFAULT_TOPIC_REFERENCE = "pooled"
DEFAULT_AGREEMENT = "match"
# Member pairs a build stores per period for the network pictures (the strongest by agreement):
# the picture draws at most 3,000, so 5,000 leaves room, while a 650-seat chamber's 210,925
# pairs per period stay out of the store.
EDGE_BUDGET = 5000

# The topic of ballots without one, in per-topic figures and the topic mix.
NO_TOPIC = "(none)"

# Choice lists of the command line (click.Choice reads them from here).
AGREEMENT_MEASURES = ("match", "kappa", "kappa-quadratic")
EXECUTORS = ("local", "dask")
EXPORT_TABLES = ("metrics", "members", "groups", "trends")
EXPORT_FORMATS = ("csv", "parquet", "json")
METRIC_LIST_FORMATS = ("text", "csv", "json")
LAYOUTS = ("long", "wide")
SCHEDULE_EVERY = ("hourly", "daily", "weekly", "monthly", "yearly")
RULE_KINDS = ("weighted", "threshold", "equal-likelihood", "backbone")


@dataclass(frozen=True)
class AgreementOptions:
    """How agreement is counted. Defaults are the documented ones (README, "Defaults").

    abstain_as_position : count abstain as a third position (default False: abstentions are
        treated like absences).
    min_shared : pairs that shared fewer ballots get no agreement value and no edge (default 5).
    drop_unanimous : leave out ballots on which every counted vote was the same (default True;
        each unanimous ballot adds 1/V to every pair and pulls modularity toward 0).
    lopsided : leave out ballots whose minority share is below this (default 0.0, off).
    min_share_cast : members who cast fewer than this share of the period's counted ballots are
        left out of the period and counted (default 0.25).
    measure : ``match`` (default: share of shared ballots answered alike, or 1 − scaled
        distance on scored ballots), ``kappa`` or ``kappa-quadratic`` (chance-corrected, graph
        weight max(κ, 0)); see :mod:`blocwatch.pipeline.build.scored`.
    """

    abstain_as_position: bool = False
    min_shared: int = DEFAULT_MIN_SHARED
    drop_unanimous: bool = True
    lopsided: float = DEFAULT_LOPSIDED
    min_share_cast: float = DEFAULT_MIN_SHARE_CAST
    measure: str = DEFAULT_AGREEMENT


@dataclass(frozen=True)
class BuildOptions:
    """Everything that decides a period's numbers (it goes into the fingerprint)."""

    period: str = DEFAULT_PERIOD
    rule: str = DEFAULT_RULE
    seed: int = DEFAULT_SEED
    bootstrap: int = DEFAULT_BOOTSTRAP
    permutations: int = DEFAULT_PERMUTATIONS
    expensive_replicates: int = DEFAULT_EXPENSIVE_REPLICATES
    agreement: AgreementOptions = field(default_factory=AgreementOptions)
    min_topic_ballots: int = DEFAULT_MIN_TOPIC_BALLOTS
    topic_reference: str = DEFAULT_TOPIC_REFERENCE
    # The reference mix itself, ((topic, share), ...): resolved per body from the store by
    # blocwatch.pipeline.build.builder.body_options (it moves the standardised series, so it
    # belongs in the fingerprint); () for bodies without topics.
    topic_mix: tuple = ()

    def params(self) -> dict:
        return asdict(self)

    @classmethod
    def from_params(cls, params: dict) -> BuildOptions:
        """The options a run stored with :meth:`params` (keys it does not know are ignored).

        >>> BuildOptions.from_params(BuildOptions(seed=3).params()) == BuildOptions(seed=3)
        True
        """
        agreement = {k: v for k, v in params.get("agreement", {}).items()
                     if k in AgreementOptions.__dataclass_fields__}
        known = {k: v for k, v in params.items()
                 if k in cls.__dataclass_fields__ and k != "agreement"}
        if "topic_mix" in known:  # JSON gives lists back
            known["topic_mix"] = tuple(tuple(pair) for pair in known["topic_mix"])
        return cls(agreement=AgreementOptions(**agreement), **known)


# -- graph rules -------------------------------------------------------------------------------
@dataclass(frozen=True)
class Rule:
    kind: str  # one of RULE_KINDS
    level: float | None = None

    @property
    def spec(self) -> str:
        return f"{self.kind}:{self.level:g}" if self.level is not None else self.kind


def parse_rule(spec: str) -> Rule:
    """Parse a rule spec, e.g. ``"threshold:0.7"`` or ``"backbone:0.2"``.

    >>> parse_rule("threshold:0.7"), parse_rule("backbone:0.2").spec
    (Rule(kind='threshold', level=0.7), 'backbone:0.2')
    """
    kind, _, rest = spec.partition(":")
    if kind in ("weighted", "equal-likelihood") and not rest:
        return Rule(kind)
    if kind in ("threshold", "backbone"):
        try:
            level = float(rest)
        except ValueError:
            level = float("nan")
        if kind == "threshold" and not 0 < level <= 1:
            raise UsageError(f"rule {spec!r}", f"threshold {rest!r} is not a number in (0, 1]",
                             "write e.g. --rule threshold:0.7")
        if kind == "backbone" and not 0 < level < 1:
            raise UsageError(f"rule {spec!r}", f"significance {rest!r} is not a number in "
                             "(0, 1)", "write e.g. --rule backbone:0.2")
        return Rule(kind, level)
    raise UsageError(f"rule {spec!r}", "is not one of weighted, threshold:X, equal-likelihood, "
                     "backbone:ALPHA",
                     "e.g. --rule weighted")


# -- period specs ------------------------------------------------------------------------------
@dataclass(frozen=True, order=True)
class Period:
    start: date
    end: date  # inclusive
    name: str


@dataclass(frozen=True)
class PeriodSpec:
    """A parsed ``--period``: ``kind`` is year, terms or rolling."""

    kind: str
    month: int = 1  # year: first month
    length: int = 0  # rolling: months per window
    step: int = 0  # rolling: months between window starts
    terms: tuple[Period, ...] = ()  # terms: the file's terms, sorted


def _months(token: str, spec: str) -> int:
    m = re.fullmatch(r"(\d+)([my])", token.strip().lower())
    if not m or int(m.group(1)) == 0:
        raise UsageError(f"period spec {spec!r}", f"{token!r} is not a length like 12m or 2y",
                         "write rolling:LEN:STEP, e.g. rolling:24m:12m")
    n = int(m.group(1))
    return n * 12 if m.group(2) == "y" else n


def read_terms(path: str | Path) -> list[Period]:
    """Named terms from a ``name,start,end`` CSV; overlapping or reversed terms are an error."""
    path = Path(path)
    if not path.exists():
        raise UsageError(f"terms file {path}", "does not exist", "check the path in terms:FILE")
    terms: list[Period] = []
    lines: dict[str, int] = {}
    with path.open(newline="", encoding="utf-8-sig") as fh:
        reader = csv.DictReader(fh)
        missing = {"name", "start", "end"} - set(reader.fieldnames or [])
        if missing:
            raise BadInputError(f"{path}:1", f"missing column(s) {', '.join(sorted(missing))}",
                                "the header must be name,start,end")
        for line, row in enumerate(reader, start=2):
            try:
                start, end = date.fromisoformat(row["start"]), date.fromisoformat(row["end"])
            except (TypeError, ValueError):
                raise BadInputError(f"{path}:{line}", f"dates {row['start']!r}, {row['end']!r} "
                                    "do not parse", "write dates as YYYY-MM-DD") from None
            if end < start:
                raise BadInputError(f"{path}:{line}", f"term {row['name']!r} ends before it "
                                    "starts", "swap start and end")
            terms.append(Period(start, end, row["name"].strip()))
            lines.setdefault(row["name"].strip(), line)
    if not terms:
        raise BadInputError(str(path), "holds no terms", "add one row per term")
    terms.sort()
    for a, b in zip(terms, terms[1:]):
        if b.start <= a.end:
            raise BadInputError(f"{path}:{lines[b.name]}", f"terms {a.name!r} and {b.name!r} "
                                f"overlap ({b.name!r} starts {b.start}, before {a.name!r} on "
                                f"line {lines[a.name]} ends {a.end})",
                                "make each term end before the next starts")
    names = [t.name for t in terms]
    if len(set(names)) != len(names):
        raise BadInputError(str(path), "repeats a term name", "give each term its own name")
    return terms


def period_spec(spec: str) -> PeriodSpec:
    """Parse a period spec (a terms file is read and checked now).

    >>> period_spec("rolling:2y:12m")
    PeriodSpec(kind='rolling', month=1, length=24, step=12, terms=())
    """
    kind, _, rest = spec.partition(":")
    if kind == "year":
        if not rest:
            return PeriodSpec("year")
        if not re.fullmatch(r"\d{1,2}", rest) or not 1 <= int(rest) <= 12:
            raise UsageError(f"period spec {spec!r}", f"month {rest!r} is not 01..12",
                             "write year:MM, e.g. year:09")
        return PeriodSpec("year", month=int(rest))
    if kind == "terms" and rest:
        return PeriodSpec("terms", terms=tuple(read_terms(rest)))
    if kind == "rolling":
        parts = rest.split(":")
        if len(parts) != 2:
            raise UsageError(f"period spec {spec!r}", "needs a length and a step",
                             "write rolling:LEN:STEP, e.g. rolling:24m:12m")
        return PeriodSpec("rolling", length=_months(parts[0], spec),
                          step=_months(parts[1], spec))
    raise UsageError(f"period spec {spec!r}", "is not one of year, year:MM, terms:FILE, "
                     "rolling:LEN:STEP", "e.g. --period year or --period rolling:24m:12m")


def parse_period_spec(spec: str) -> str:
    """Check a spec's form early (before any work); return it unchanged."""
    period_spec(spec)
    return spec


def build_options(*, period: str = DEFAULT_PERIOD, rule: str = DEFAULT_RULE,
                  seed: int = DEFAULT_SEED, bootstrap: int = DEFAULT_BOOTSTRAP,
                  permutations: int = DEFAULT_PERMUTATIONS,
                  expensive_replicates: int = DEFAULT_EXPENSIVE_REPLICATES,
                  abstain_as_position: bool = False, min_shared: int = DEFAULT_MIN_SHARED,
                  keep_unanimous: bool = False, lopsided: float = DEFAULT_LOPSIDED,
                  min_share_cast: float = DEFAULT_MIN_SHARE_CAST,
                  agreement: str = DEFAULT_AGREEMENT,
                  min_topic_ballots: int = DEFAULT_MIN_TOPIC_BALLOTS,
                  topic_reference: str = DEFAULT_TOPIC_REFERENCE) -> BuildOptions:
    """:class:`BuildOptions` from the build flags, the specs checked first."""
    parse_period_spec(period)
    parse_rule(rule)
    return BuildOptions(period=period, rule=rule, seed=seed, bootstrap=bootstrap,
                        min_topic_ballots=min_topic_ballots, topic_reference=topic_reference,
                        permutations=permutations, expensive_replicates=expensive_replicates,
                        agreement=AgreementOptions(abstain_as_position=abstain_as_position,
                                                   min_shared=min_shared,
                                                   drop_unanimous=not keep_unanimous,
                                                   lopsided=lopsided,
                                                   min_share_cast=min_share_cast,
                                                   measure=agreement))
