"""The charts: networks, trends, group heat maps, agenda, trajectories, colours, images."""
