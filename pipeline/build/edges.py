"""The member pairs a network picture draws, kept by the build within a size budget.

The report never recomputes agreement: the build that computed a period's figures stores the
period's strongest pairs beside them (:data:`blocwatch.pipeline.options.EDGE_BUDGET` per
period), so a picture always shows the agreement its numbers came from.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

EDGE_COLUMNS = ["member_a", "member_b", "agreement"]


def strongest_pairs(agreement: np.ndarray, member_ids, budget: int) -> tuple[pd.DataFrame, int]:
    """The ``budget`` member pairs with the highest agreement, and how many pairs had a value.

    Pairs without a value (NaN: too few shared ballots) are never kept. Ties at the cut are
    broken by member order, so the same matrix always keeps the same pairs.

    >>> a = np.array([[1, .9, np.nan], [.9, 1, .4], [np.nan, .4, 1]])
    >>> frame, n = strongest_pairs(a, np.array(["x", "y", "z"]), budget=1)
    >>> frame.values.tolist(), n
    ([['x', 'y', 0.9]], 2)
    """
    agreement = np.asarray(agreement, dtype=float)
    ids = np.asarray(member_ids, dtype=object)
    i, j = np.triu_indices(agreement.shape[0], k=1)
    value = agreement[i, j]
    ok = ~np.isnan(value)
    i, j, value = i[ok], j[ok], value[ok]
    order = np.lexsort((j, i, -value))[: max(int(budget), 0)]  # highest first, then by position
    frame = pd.DataFrame({"member_a": ids[i[order]], "member_b": ids[j[order]],
                          "agreement": value[order]}, columns=EDGE_COLUMNS)
    return frame, int(ok.sum())
