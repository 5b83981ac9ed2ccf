"""The configured source files and their state against the store's load log.

A rebuild loads the files this scan finds new or changed; ``blocwatch status`` lists them as
pending. Hashing and comparing needs no part of the computing stack.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from pathlib import Path

from blocwatch.pipeline.config import Config, body_ingest_options, body_sources
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest.sniff import load_key
from blocwatch.pipeline.store.bodies import loaded_files
from blocwatch.pipeline.store.database import Store

_CHUNK = 1 << 20


def file_sha256(path: str | Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        while chunk := fh.read(_CHUNK):
            h.update(chunk)
    return h.hexdigest()


@dataclass(frozen=True)
class SourceFile:
    body: str
    path: Path
    sha256: str
    state: str  # "new", "changed" (same path, other content) or "loaded"
    kind: str = "votes"  # or "members" (roster) or "ballots"


def config_bodies(cfg: Config, body: str | None) -> list[str]:
    names = list(cfg.bodies)
    if body is None:
        return names
    return [body] if body in names else []


def scan_sources(store: Store | None, cfg: Config, body: str | None = None) -> list[SourceFile]:
    """Every file the configured globs match, with its state against the store's load log."""
    out = []
    for name in config_bodies(cfg, body):
        loaded: dict[str, set[str]] = {}
        for sha, file in (loaded_files(store, name) if store is not None else []):
            loaded.setdefault(sha, set()).add(file)
        seen_paths = {f for files in loaded.values() for f in files}
        files = [(p, "votes") for p in body_sources(name, cfg)]
        aux = body_ingest_options(name, cfg)
        files += [(Path(aux[k]).resolve(), k) for k in ("members", "ballots") if k in aux]
        for path, kind in files:
            if not path.is_file():
                raise UsageError(f"config: bodies.{name}.{kind}", f"names {path}, which does "
                                 "not exist", "fix the path (relative to blocwatch.toml)")
            sha = load_key(path, file_sha256(path), aux.get("sheet") if kind == "votes" else None)
            if sha in loaded:
                state = "loaded"
            elif _seen(path, cfg, seen_paths):
                state = "changed"
            else:
                state = "new"
            out.append(SourceFile(name, path, sha, state, kind))
    return out


def _seen(path: Path, cfg: Config, seen_paths: set[str]) -> bool:
    """Was a file at this place loaded before? Matched by its path relative to the project
    folder, so a project moved or copied elsewhere still knows its files."""
    if str(path) in seen_paths:
        return True
    try:
        tail = "/" + path.relative_to(cfg.base.resolve()).as_posix()
    except ValueError:
        return False
    return any(p.replace("\\", "/").endswith(tail) for p in seen_paths)
