"""ruff over the whole tree: style, import order and the ban on bare package names (TID251)."""

import shutil
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


@pytest.mark.skipif(shutil.which("ruff") is None, reason="ruff is in the test extra")
def test_ruff_is_clean():
    proc = subprocess.run(["ruff", "check", "--no-cache", "."], cwd=ROOT, capture_output=True,
                          text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
