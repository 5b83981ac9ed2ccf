"""The demo: invented bodies for a first run."""
