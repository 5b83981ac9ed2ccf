"""Files, the store, periods, vote matrices, agreement, graphs, runs and the CLI.

The public API is :data:`__all__`; each name is loaded on first use, so ``import
blocwatch.pipeline`` stays light::

    from blocwatch.pipeline import BuildOptions, Store, build_results, export_frame, ingest_files

``build_results`` is :func:`blocwatch.pipeline.build.builder.build`, named so that it does not
shadow the ``build`` sub-package. The rooms, in the order data flows: ``ingest`` (files into the
store), ``store`` (the DuckDB file), ``build`` (periods, vote matrices, agreement, graphs,
metrics), ``ops`` (rebuild, status, schedule, the lock), ``report`` (export and the frames a
report reads), ``demo`` (invented bodies) and ``cli`` (the commands).
"""

from __future__ import annotations

import importlib

_EXPORTS = {  # public name -> (module, name there)
    "AgreementOptions": ("blocwatch.pipeline.options", "AgreementOptions"),
    "BlocwatchError": ("blocwatch.pipeline.errors", "BlocwatchError"),
    "BuildOptions": ("blocwatch.pipeline.options", "BuildOptions"),
    "Store": ("blocwatch.pipeline.store.database", "Store"),
    "build_results": ("blocwatch.pipeline.build.builder", "build"),
    "export_frame": ("blocwatch.pipeline.report.export", "export_frame"),
    "ingest_files": ("blocwatch.pipeline.ingest.load", "ingest_files"),
    "locked_store": ("blocwatch.pipeline.ops.lock", "locked_store"),
    "rebuild": ("blocwatch.pipeline.ops.rebuild", "rebuild"),
    "rebuild_with_report": ("blocwatch.pipeline.ops.rebuild", "rebuild_with_report"),
    "run_demo": ("blocwatch.pipeline.demo.run", "run_demo"),
    "status": ("blocwatch.pipeline.ops.status", "status"),
    "write_frame": ("blocwatch.pipeline.report.export", "write_frame"),
    "write_report": ("blocwatch.pipeline.report.write", "write_report"),
}

__all__ = sorted(_EXPORTS)


def __getattr__(name: str):
    if name not in _EXPORTS:
        raise AttributeError(f"module 'blocwatch.pipeline' has no attribute {name!r}")
    module, attr = _EXPORTS[name]
    value = getattr(importlib.import_module(module), attr)
    globals()[name] = value  # later look-ups skip this function
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
