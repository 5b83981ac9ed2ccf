"""One run at a time per store: a kernel file lock on ``<store>.lock``.

The lock is ``flock(2)`` on a file beside the store. The kernel drops it when the holding
process exits for any reason (kill -9, power loss, a reboot), so there is never a stale lock to
clean up by hand. The file itself stays; while held it records who holds it (pid, start time,
command, host) so a second run can say whom it is waiting for. The record is only a message:
the lock is the ``flock``, never the file's presence.

``flock`` locks are local to one machine; a store on a network file system shared by several
machines is not protected across them.
"""

from __future__ import annotations

import contextlib
import fcntl
import json
import os
import socket
import time
from collections.abc import Iterator
from datetime import datetime, timezone
from pathlib import Path

from blocwatch.pipeline.errors import LockHeldError

# A process that has just taken the lock writes its record right after; a reader that finds the
# lock taken but the record empty waits this long for it to appear (also rides out a status probe).
_RECORD_WAIT = 1.0


def lock_path(store_path: str | Path) -> Path:
    """The lock file that guards ``store_path`` (resolved, so every path to the store, relative
    or through a symbolic link, names the same lock)."""
    return Path(f"{Path(store_path).resolve()}.lock")


def _read_record(fd: int) -> dict:
    os.lseek(fd, 0, os.SEEK_SET)
    data = b""
    while chunk := os.read(fd, 4096):
        data += chunk
    try:
        record = json.loads(data.decode("utf-8")) if data.strip() else {}
    except (UnicodeDecodeError, json.JSONDecodeError):
        record = {}
    return record if isinstance(record, dict) else {}


def _write_record(fd: int, record: dict) -> None:
    os.ftruncate(fd, 0)
    os.lseek(fd, 0, os.SEEK_SET)
    os.write(fd, (json.dumps(record, sort_keys=True) + "\n").encode("utf-8"))
    os.fsync(fd)


def _alive(record: dict) -> bool:
    """Whether the recorded holder still runs (an empty or dead record means the lock is only
    being probed, or its holder has just started)."""
    pid = record.get("pid")
    if not isinstance(pid, int) or record.get("host", socket.gethostname()) != socket.gethostname():
        return bool(pid)
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # alive, owned by someone else
        return True
    return True


def describe(record: dict) -> str:
    """``pid 123, started 2026-01-01 03:00:00 UTC, running 'rebuild'`` (parts that are known)."""
    parts = [f"pid {record['pid']}" if "pid" in record else "pid unknown"]
    if record.get("started"):
        parts.append(f"started {record['started']}")
    if record.get("command"):
        parts.append(f"running {record['command']!r}")
    if record.get("host") and record["host"] != socket.gethostname():
        parts.append(f"on host {record['host']}")
    return ", ".join(parts)


def _held_error(store_path: str | Path, record: dict) -> LockHeldError:
    return LockHeldError(
        f"store {store_path}", f"another blocwatch run holds its lock ({describe(record)})",
        "wait for that run to finish and try again; the lock frees itself when that process "
        "exits, so there is nothing to delete")


@contextlib.contextmanager
def store_lock(store_path: str | Path, command: str) -> Iterator[dict]:
    """Hold the store's lock for the ``with`` block, or raise :class:`LockHeldError` at once.

    Yields the record written into the lock file. An in-memory store (``:memory:``) is private
    to its process and needs no lock.
    """
    if str(store_path) == ":memory:":
        yield {"pid": os.getpid(), "command": command}
        return
    path = lock_path(store_path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o644)
    try:
        deadline = time.monotonic() + _RECORD_WAIT
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                record = _read_record(fd)
                if _alive(record) or time.monotonic() >= deadline:
                    raise _held_error(store_path, record) from None
                time.sleep(0.05)
        record = {"pid": os.getpid(), "command": command, "host": socket.gethostname(),
                  "started": datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")}
        _write_record(fd, record)
        try:
            yield record
        finally:
            os.ftruncate(fd, 0)  # a clean exit leaves no record; a killed one leaves a dead pid
            fcntl.flock(fd, fcntl.LOCK_UN)
    finally:
        os.close(fd)


def lock_holder(store_path: str | Path) -> dict | None:
    """The record of the run holding the lock now, or None when the lock is free.

    Probes with a shared lock for an instant; a run starting in that instant waits for it (see
    :data:`_RECORD_WAIT`) instead of failing.
    """
    if str(store_path) == ":memory:":
        return None
    path = lock_path(store_path)
    if not path.exists():
        return None
    fd = os.open(path, os.O_RDONLY)
    try:
        try:
            fcntl.flock(fd, fcntl.LOCK_SH | fcntl.LOCK_NB)
        except BlockingIOError:
            return _read_record(fd) or {}
        fcntl.flock(fd, fcntl.LOCK_UN)
        return None
    finally:
        os.close(fd)


@contextlib.contextmanager
def locked_store(store_path: str | Path, command: str, **store_options) -> Iterator:
    """Take the lock, then open the store: the way every writing command opens it."""
    from blocwatch.pipeline.store.database import Store

    with store_lock(store_path, command), Store(store_path, **store_options) as store:
        yield store
