"""Report: the stored results read back for exports and pages."""
