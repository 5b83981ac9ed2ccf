"""Every default that decides a period's numbers, in one light module.

Kept free of heavy imports (numpy, scikit-learn, networkx) so that the CLI can show them in
``--help`` and in ``blocwatch init`` without loading the computing stack. The modules that use
them re-export them under the same names.
"""

DEFAULT_PERIOD = "year"
DEFAULT_RULE = "weighted"
DEFAULT_SEED = 20240601
DEFAULT_BOOTSTRAP = 200
DEFAULT_PERMUTATIONS = 200
# Replicates and permutations for families marked expensive (Louvain, CV fits, IRT): each call
# costs milliseconds, so they get this many at most.
DEFAULT_EXPENSIVE_REPLICATES = 40
DEFAULT_MIN_SHARED = 5
DEFAULT_MIN_SHARE_CAST = 0.25
DEFAULT_LOPSIDED = 0.0
