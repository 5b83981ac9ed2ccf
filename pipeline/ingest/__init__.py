"""Ingest: read ballot files, check everything, write one load all or nothing."""
