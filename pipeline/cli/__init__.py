"""The ``blocwatch`` command line."""
