"""Build: periods, vote matrices, agreement, graphs and one period's metrics, written per period."""
