"""Change over periods: trend tests and change points, and the agenda's share of a change."""
