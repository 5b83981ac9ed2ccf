"""The store lock: one holder at a time, freed by the kernel when the holder dies."""

import fcntl
import os
import signal
import subprocess
import sys
import threading
import time

import pytest

from blocwatch.pipeline.errors import EXIT_LOCKED, LockHeldError
from blocwatch.pipeline.ops.lock import lock_holder, lock_path, store_lock

HOLD = """
import sys, time
from blocwatch.pipeline.ops.lock import store_lock
with store_lock(sys.argv[1], "holder-test"):
    print("held", flush=True)
    time.sleep(60)
"""


def _start_holder(store):
    proc = subprocess.Popen([sys.executable, "-c", HOLD, str(store)], stdout=subprocess.PIPE,
                            text=True)
    assert proc.stdout.readline().strip() == "held"
    return proc


def test_second_holder_is_refused_with_pid_and_start_time(tmp_path):
    store = tmp_path / "s.duckdb"
    proc = _start_holder(store)
    try:
        with pytest.raises(LockHeldError) as info:
            with store_lock(store, "test"):
                pass
        message = info.value.line()
        assert f"pid {proc.pid}" in message
        assert "started 20" in message and "UTC" in message
        assert "'holder-test'" in message
        assert info.value.exit_code == EXIT_LOCKED == 75  # README "Commands": exit codes
        holder = lock_holder(store)
        assert holder is not None and holder["pid"] == proc.pid
    finally:
        proc.kill()
        proc.wait()


def test_lock_frees_itself_when_the_holder_is_killed(tmp_path):
    store = tmp_path / "s.duckdb"
    proc = _start_holder(store)
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    # The record of the dead holder is still in the file: the lock is not the file.
    assert str(proc.pid) in lock_path(store).read_text()
    assert lock_holder(store) is None
    with store_lock(store, "after") as record:
        assert record["pid"] == os.getpid()
        assert lock_holder(store) is not None
    assert lock_holder(store) is None


def test_clean_release_clears_the_record(tmp_path):
    store = tmp_path / "s.duckdb"
    with store_lock(store, "x"):
        assert str(os.getpid()) in lock_path(store).read_text()
    assert lock_path(store).read_text() == ""
    with store_lock(store, "again"):  # and it can be taken again
        pass


def test_nested_lock_in_one_process_is_refused(tmp_path):
    """flock is per open file: a second open in the same process is a second holder."""
    store = tmp_path / "s.duckdb"
    with store_lock(store, "outer"):
        with pytest.raises(LockHeldError, match=f"pid {os.getpid()}"):
            with store_lock(store, "inner"):
                pass


def test_released_when_the_body_raises(tmp_path):
    store = tmp_path / "s.duckdb"
    with pytest.raises(RuntimeError):
        with store_lock(store, "x"):
            raise RuntimeError("boom")
    assert lock_holder(store) is None


def test_a_status_probe_does_not_make_a_starting_run_fail(tmp_path):
    """A shared probe (what status does) held for a moment: the writer waits, then gets it."""
    store = tmp_path / "s.duckdb"
    path = lock_path(store)
    path.touch()
    fd = os.open(path, os.O_RDONLY)
    fcntl.flock(fd, fcntl.LOCK_SH)
    timer = threading.Timer(0.3, lambda: (fcntl.flock(fd, fcntl.LOCK_UN), os.close(fd)))
    timer.start()
    t0 = time.monotonic()
    with store_lock(store, "writer"):
        waited = time.monotonic() - t0
    timer.join()
    assert 0.2 < waited < 1.0


def test_memory_store_needs_no_lock(tmp_path):
    with store_lock(":memory:", "a"), store_lock(":memory:", "b"):
        pass
    assert lock_holder(":memory:") is None
    assert not (tmp_path / ":memory:.lock").exists()
