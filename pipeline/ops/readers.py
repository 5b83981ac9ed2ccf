"""Readers (``export``, ``report``, ``status``) beside a running rebuild: wait, then say who.

DuckDB lets one process write a store file and no other process open it meanwhile, not even to
read. A reader therefore waits while a blocwatch run holds the store's lock, up to ``wait``
seconds (``--wait``; :data:`DEFAULT_WAIT`), checking a few times a second, and then gives up
with exit 75 naming the holder. A store held open by a program that is not blocwatch (no lock
record) is waited for the same way; DuckDB's own message never reaches the user.
"""

from __future__ import annotations

import contextlib
import time
from collections.abc import Iterator
from pathlib import Path

from blocwatch.pipeline.errors import LockHeldError, StoreError
from blocwatch.pipeline.ops.lock import describe, lock_holder

DEFAULT_WAIT = 60.0  # seconds a reader waits for a running rebuild (--wait)
_POLL = 0.25


def _held(store_path: str | Path, record: dict | None, wait: float) -> LockHeldError:
    who = (f"a blocwatch run holds its lock ({describe(record)})" if record
           else "another program holds the file open")
    waited = f"after waiting {wait:g} s" if wait else "and --wait is 0"
    return LockHeldError(f"store {store_path}", f"{who}, still busy {waited}",
                         "try again when it has finished, or pass --wait SECONDS to wait "
                         "longer")


def wait_for_store(store_path: str | Path, wait: float = DEFAULT_WAIT, *,
                   deadline: float | None = None) -> None:
    """Return once no blocwatch run holds the store's lock, or raise after ``wait`` seconds
    (or at ``deadline``, a ``time.monotonic()`` value, when given)."""
    deadline = time.monotonic() + max(wait, 0.0) if deadline is None else deadline
    while (record := lock_holder(store_path)) is not None:
        if time.monotonic() >= deadline:
            raise _held(store_path, record, wait)
        time.sleep(_POLL)


@contextlib.contextmanager
def reading_store(store_path: str | Path, wait: float = DEFAULT_WAIT) -> Iterator:
    """The store opened read-only once no run writes it (see the module docstring)."""
    from blocwatch.pipeline.store.database import Store, StoreBusyError

    deadline = time.monotonic() + max(wait, 0.0)
    while True:
        wait_for_store(store_path, wait, deadline=deadline)
        try:
            store = Store(store_path, read_only=True)
        except StoreBusyError:  # a run started in between, or a program other than blocwatch
            if time.monotonic() >= deadline:
                raise _held(store_path, lock_holder(store_path), wait) from None
            time.sleep(_POLL)
            continue
        except StoreError:
            raise
        break
    with store:
        yield store
