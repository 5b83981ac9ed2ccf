"""Shared helpers for end-to-end tests: run the real CLI in a subprocess."""

import shutil
import subprocess
import sys
from pathlib import Path

import pytest


def _exe() -> list[str]:
    exe = shutil.which("blocwatch")
    if exe:
        return [exe]
    return [sys.executable, "-c", "from blocwatch.pipeline.cli.main import main; main()"]


@pytest.fixture
def run_cli(tmp_path):
    """Run ``blocwatch ARGS`` in tmp_path; return the CompletedProcess (text output)."""

    def run(*args, cwd: Path | None = None, check: bool = False, timeout: float = 300):
        proc = subprocess.run([*_exe(), *map(str, args)], cwd=cwd or tmp_path,
                              capture_output=True, text=True, timeout=timeout)
        if check and proc.returncode != 0:
            raise AssertionError(f"blocwatch {' '.join(map(str, args))} exited "
                                 f"{proc.returncode}\n{proc.stdout}\n{proc.stderr}")
        return proc

    return run
