"""Measures of the agreement graph: modularity, communities, cross-group ties, bridging."""
