"""Figures and pages from result tables. Never computes a metric, never opens the store."""
