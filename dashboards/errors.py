"""Errors raised by the dashboards package.

The package does not import ``blocwatch.pipeline`` (data flows one way), so it has its own small
error classes. Each carries ``what``, ``why`` and ``fix`` like the pipeline's errors, a one-line
message built from them, and the exit code the CLI is expected to return for it.
"""

from __future__ import annotations


class DashboardError(Exception):
    """Base class: ``what`` failed ``why``; ``fix`` says what to do."""

    exit_code = 1

    def __init__(self, what: str, why: str, fix: str = ""):
        self.what, self.why, self.fix = what, why, fix
        super().__init__(self.line())

    def line(self) -> str:
        text = f"{self.what}: {self.why}"
        return f"{text} — {self.fix}" if self.fix else text


class ReportInputError(DashboardError, ValueError):
    """A result table or option handed to the report cannot be drawn as it is.

    Exit code 65 (bad input data), as for the pipeline's ``BadInputError``.
    """

    exit_code = 65


class ImageExportUnavailable(DashboardError, RuntimeError):
    """PNG/SVG export needs a Chrome or Chromium browser and none could be used.

    The message names the browser path that was tried (or says none was found) and how to fix it:
    install Debian's ``chromium`` package, or point ``BLOCWATCH_BROWSER`` at a browser, or turn
    image export off. Exit code 69 (``EX_UNAVAILABLE`` of sysexits, the family 65 and 75 come
    from): a scheduler can tell "no browser here" from a failed run. HTML, JSON and CSV outputs
    never need a browser.
    """

    exit_code = 69
