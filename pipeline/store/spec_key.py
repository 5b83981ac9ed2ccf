"""Schema 4: the period spec is part of every result's key, so series cut differently live
side by side (``build --period rolling:12m:6m`` no longer replaces the yearly series).

DuckDB cannot change a table's primary key in place, so each result table is recreated with a
``spec`` column (last, so older column positions stay) and ``spec`` in its key after ``body``,
and its rows copied over. Rows written before carry the spec of the run that wrote them (its
``params``); a run without one was cut with the default then in force, ``year``.
"""

from __future__ import annotations

# Result tables and their primary keys after this migration (spec right after body).
SPEC_KEYS = {
    "periods": ("body", "spec", "period"),
    "period_metrics": ("body", "spec", "period", "metric"),
    "member_metrics": ("body", "spec", "period", "member_id", "metric"),
    "group_agreement": ("body", "spec", "period", "group_a", "group_b"),
    "subset_metrics": ("body", "spec", "period", "subset", "metric"),
    "period_edges": ("body", "spec", "period", "member_a", "member_b"),
    "trends": ("body", "spec", "metric"),
    "subset_trends": ("body", "spec", "subset", "metric"),
}
OLD_DEFAULT_SPEC = "year"  # the only period spec blocwatch had a default for before schema 4


def key_results_by_spec(con) -> None:
    """Recreate each table of :data:`SPEC_KEYS` with ``spec`` in its key (inside the caller's
    transaction); existing rows get the spec of the run that wrote them."""
    for table, key in SPEC_KEYS.items():
        columns = con.execute(f"PRAGMA table_info('{table}')").fetchall()
        if any(name == "spec" for _, name, *_ in columns):
            continue  # keyed already (like the IF NOT EXISTS of the SQL migrations)
        defs = [f"{name} {kind}{' NOT NULL' if notnull else ''}"
                f"{f' DEFAULT {default}' if default is not None else ''}"
                for _, name, kind, notnull, default, _ in columns]
        con.execute(f"CREATE TABLE {table}__spec ({', '.join(defs)}, spec VARCHAR NOT NULL, "
                    f"PRIMARY KEY ({', '.join(key)}))")
        con.execute(f"""INSERT INTO {table}__spec SELECT t.*, coalesce(
                            json_extract_string(r.params, '$.period'), ?)
                        FROM {table} t LEFT JOIN runs r ON r.run_id = t.run_id""",
                    [OLD_DEFAULT_SPEC])
        con.execute(f"DROP TABLE {table}")
        con.execute(f"ALTER TABLE {table}__spec RENAME TO {table}")
