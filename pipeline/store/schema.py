"""The store's schema: every table, its version and the migrations between versions.

The schema version is recorded in ``meta``; :func:`migrate` brings an older file up to date and
refuses a newer one. Table names that reach SQL are checked against :data:`TABLES` first.
"""

from __future__ import annotations

from collections.abc import Callable

import duckdb

from blocwatch.pipeline.errors import StoreError
from blocwatch.pipeline.store.spec_key import key_results_by_spec

# The fingerprint of a period built before its pairs were stored (migration 2 -> 3): equal to
# no fingerprint a build computes, so the period reads as changed until it is recomputed.
PAIRS_NOT_STORED = "built before pairs were stored"

SCHEMA_VERSION = 4

# Sentinels for open-ended membership dates (primary keys cannot hold NULL).
OPEN_FROM = "1800-01-01"
OPEN_TO = "9999-12-31"

_SCHEMA_V1 = f"""
CREATE TABLE IF NOT EXISTS meta (key VARCHAR PRIMARY KEY, value VARCHAR NOT NULL);
CREATE TABLE IF NOT EXISTS bodies (
    body VARCHAR PRIMARY KEY,
    scale VARCHAR NOT NULL DEFAULT 'binary'
);
CREATE TABLE IF NOT EXISTS members (
    body VARCHAR NOT NULL,
    member_id VARCHAR NOT NULL,
    name VARCHAR,
    PRIMARY KEY (body, member_id)
);
CREATE TABLE IF NOT EXISTS memberships (
    body VARCHAR NOT NULL,
    member_id VARCHAR NOT NULL,
    group_name VARCHAR NOT NULL,
    valid_from DATE NOT NULL DEFAULT DATE '{OPEN_FROM}',
    valid_to DATE NOT NULL DEFAULT DATE '{OPEN_TO}',
    PRIMARY KEY (body, member_id, valid_from),
    CHECK (valid_to >= valid_from)
);
CREATE TABLE IF NOT EXISTS ballots (
    body VARCHAR NOT NULL,
    ballot_id VARCHAR NOT NULL,
    held_on DATE NOT NULL,
    title VARCHAR,
    item VARCHAR,
    scale VARCHAR NOT NULL DEFAULT 'binary',
    scale_min DOUBLE,
    scale_max DOUBLE,
    options VARCHAR,
    PRIMARY KEY (body, ballot_id)
);
CREATE TABLE IF NOT EXISTS votes (
    body VARCHAR NOT NULL,
    ballot_id VARCHAR NOT NULL,
    member_id VARCHAR NOT NULL,
    raw VARCHAR,
    choice VARCHAR NOT NULL,
    score DOUBLE,
    PRIMARY KEY (body, ballot_id, member_id)
);
CREATE TABLE IF NOT EXISTS ingests (
    sha256 VARCHAR NOT NULL,
    body VARCHAR NOT NULL,
    file VARCHAR NOT NULL,
    rows BIGINT NOT NULL,
    loaded_at TIMESTAMP NOT NULL,
    PRIMARY KEY (sha256, body)
);
CREATE TABLE IF NOT EXISTS runs (
    run_id BIGINT PRIMARY KEY,
    started TIMESTAMP NOT NULL,
    finished TIMESTAMP,
    version VARCHAR NOT NULL,
    command VARCHAR NOT NULL,
    params VARCHAR NOT NULL,
    inputs VARCHAR,
    recomputed VARCHAR,
    status VARCHAR NOT NULL
);
CREATE TABLE IF NOT EXISTS periods (
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    period_start DATE NOT NULL,
    period_end DATE NOT NULL,
    fingerprint VARCHAR NOT NULL,
    run_id BIGINT NOT NULL,
    n_members INTEGER NOT NULL,
    n_ballots INTEGER NOT NULL,
    n_dropped INTEGER NOT NULL,
    PRIMARY KEY (body, period)
);
CREATE TABLE IF NOT EXISTS period_metrics (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    metric VARCHAR NOT NULL,
    value DOUBLE,
    low DOUBLE,
    high DOUBLE,
    null_mean DOUBLE,
    null_z DOUBLE,
    null_p DOUBLE,
    note VARCHAR,
    PRIMARY KEY (body, period, metric)
);
CREATE TABLE IF NOT EXISTS member_metrics (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    member_id VARCHAR NOT NULL,
    group_name VARCHAR,
    metric VARCHAR NOT NULL,
    value DOUBLE,
    note VARCHAR,
    PRIMARY KEY (body, period, member_id, metric)
);
CREATE TABLE IF NOT EXISTS group_agreement (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    group_a VARCHAR NOT NULL,
    group_b VARCHAR NOT NULL,
    agreement DOUBLE,
    n_pairs INTEGER NOT NULL,
    alpha DOUBLE,  -- Krippendorff's alpha of group_a's members (diagonal rows, scored ballots)
    PRIMARY KEY (body, period, group_a, group_b)
);
CREATE TABLE IF NOT EXISTS trends (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    metric VARCHAR NOT NULL,
    n_periods INTEGER NOT NULL,
    mk_s DOUBLE,
    mk_z DOUBLE,
    mk_p DOUBLE,
    tau DOUBLE,
    slope DOUBLE,
    slope_low DOUBLE,
    slope_high DOUBLE,
    change_points VARCHAR,
    note VARCHAR,
    PRIMARY KEY (body, metric)
);
"""

# Every table, in dependency order; names reaching SQL are checked against this list.
TABLES = (
    "meta", "bodies", "members", "memberships", "ballots", "votes", "ingests", "runs",
    "periods", "period_metrics", "member_metrics", "group_agreement", "trends",
    "subset_metrics", "subset_trends", "period_edges", "measures",
)

# Migrations from version N to N+1, applied in order by :func:`migrate`: SQL, or a function
# of the connection where the change depends on what the tables hold.
_MIGRATIONS: dict[int, str | Callable] = {
    # 1 -> 2: one optional topic per ballot; the per-subset series (one topic's ballots, the
    # agenda-standardised series) and their trends, plus trends of each pair of groups and
    # the bootstrap interval of each pair's mean agreement.
    1: """
ALTER TABLE ballots ADD COLUMN IF NOT EXISTS topic VARCHAR;
ALTER TABLE group_agreement ADD COLUMN IF NOT EXISTS low DOUBLE;
ALTER TABLE group_agreement ADD COLUMN IF NOT EXISTS high DOUBLE;
CREATE TABLE IF NOT EXISTS subset_metrics (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    subset VARCHAR NOT NULL,
    metric VARCHAR NOT NULL,
    value DOUBLE,
    low DOUBLE,
    high DOUBLE,
    n_ballots INTEGER NOT NULL,
    note VARCHAR,
    PRIMARY KEY (body, period, subset, metric)
);
CREATE TABLE IF NOT EXISTS subset_trends (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    subset VARCHAR NOT NULL,
    metric VARCHAR NOT NULL,
    n_periods INTEGER NOT NULL,
    mk_s DOUBLE,
    mk_z DOUBLE,
    mk_p DOUBLE,
    tau DOUBLE,
    slope DOUBLE,
    slope_low DOUBLE,
    slope_high DOUBLE,
    change_points VARCHAR,
    note VARCHAR,
    PRIMARY KEY (body, subset, metric)
);
""",
    # 2 -> 3: the pairs each period's network picture draws, stored by the build (at most
    # options.EDGE_BUDGET per period), how many pairs had an agreement value, and the methods
    # reference of the metrics the last build computed: the report reads both and computes
    # neither. Periods built before have no stored pairs, so their fingerprint is replaced by
    # a marker that matches no build: status lists them as changed and the next build or
    # rebuild recomputes them (their figures stay readable until then).
    2: f"""
CREATE TABLE IF NOT EXISTS period_edges (
    run_id BIGINT NOT NULL,
    body VARCHAR NOT NULL,
    period VARCHAR NOT NULL,
    member_a VARCHAR NOT NULL,
    member_b VARCHAR NOT NULL,
    agreement DOUBLE NOT NULL,
    PRIMARY KEY (body, period, member_a, member_b)
);
ALTER TABLE periods ADD COLUMN IF NOT EXISTS n_pairs INTEGER;
CREATE TABLE IF NOT EXISTS measures (
    metric VARCHAR PRIMARY KEY,
    position INTEGER NOT NULL,
    family VARCHAR,
    label VARCHAR,
    direction VARCHAR,
    description VARCHAR,
    formula VARCHAR,
    reference VARCHAR,
    checks VARCHAR,
    run_id BIGINT NOT NULL
);
UPDATE periods SET fingerprint = '{PAIRS_NOT_STORED}';
""",
    # 3 -> 4: the period spec is part of every result's key (store/spec_key.py): results of
    # several specs live side by side, and old rows keep the spec their run was built with.
    3: key_results_by_spec,
}


def check_table(name: str) -> str:
    """Return ``name`` if it is one of the store's tables, else raise."""
    if name not in TABLES:
        raise StoreError(f"table {name!r}", "is not a blocwatch table",
                         f"use one of: {', '.join(TABLES)}")
    return name


def check_version(con: duckdb.DuckDBPyConnection) -> int:
    try:
        row = con.execute("SELECT value FROM meta WHERE key = 'schema_version'").fetchone()
    except duckdb.CatalogException:
        return 0
    version = int(row[0]) if row else 0
    if version > SCHEMA_VERSION:
        raise StoreError("store", f"has schema version {version}, newer than this blocwatch "
                         f"({SCHEMA_VERSION})", "upgrade blocwatch")
    return version


def migrate(con: duckdb.DuckDBPyConnection) -> int:
    """Create the schema, or bring an older one up to :data:`SCHEMA_VERSION`; return it."""
    version = check_version(con)
    if version == SCHEMA_VERSION:
        return version
    con.execute("BEGIN TRANSACTION")
    try:
        if version == 0:
            con.execute(_SCHEMA_V1)
            version = 1
        while version < SCHEMA_VERSION:
            step = _MIGRATIONS[version]
            if callable(step):
                step(con)
            else:
                con.execute(step)
            version += 1
        con.execute("INSERT OR REPLACE INTO meta VALUES ('schema_version', ?)", [str(version)])
        con.execute("COMMIT")
    except BaseException:
        con.execute("ROLLBACK")
        raise
    return version
