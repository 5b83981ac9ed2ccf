"""A period's fingerprint: what its figures were computed from, as one hash.

The planner compares it with the stored one to tell a current period from a changed one, and
the build stores it beside the figures. It needs the period's vote matrix and the options but
none of the computing stack, so ``blocwatch status`` can judge what is stale without loading
the agreement kernel or any model fit.
"""

from __future__ import annotations

import hashlib
import json

import numpy as np

from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.options import BuildOptions

# What a period's stored results hold, beyond the figures: raised when that changes, so stored
# periods read as changed and the next build recomputes them. 2: the stored pairs are the graph
# rule's edge set (before: the strongest of all pairs).
RESULTS_LAYOUT = 2


def fingerprint(vm: VoteMatrix, opts: BuildOptions, version: str) -> str:
    """Hash of the period's votes, the groups in force, the parameters and the tool version."""
    h = hashlib.sha256()
    for arr in (vm.member_ids, vm.groups, vm.ballot_ids, vm.items):
        h.update("\x1f".join(map(str, arr)).encode())
        h.update(b"\x1e")
    h.update(np.ascontiguousarray(vm.votes).tobytes())
    if vm.topics is not None:  # only bodies with topics: others keep their stored fingerprints
        h.update(b"topics\x1e" + "\x1f".join(map(str, vm.topics)).encode())
    if vm.scales is not None:  # scored ballots: their scales and answers
        h.update(vm.scales.digest())
    h.update(json.dumps(opts.params(), sort_keys=True, default=str).encode())
    h.update(version.encode())
    h.update(f"results layout {RESULTS_LAYOUT}".encode())
    return h.hexdigest()
