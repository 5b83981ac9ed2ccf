"""Store: the DuckDB file, its schema, and the tables' reads and writes."""
