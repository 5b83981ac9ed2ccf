"""Files, the store, periods, vote matrices, agreement, graphs, runs and the CLI."""
