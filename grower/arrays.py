"""Two numpy reductions without the import of `numpy.ma` they make on first use.

`np.unique` (without its index or count outputs) and `np.median` ask `numpy.ma` whether
their argument is masked, and that first import costs about 10 ms, a few per cent of
`tonight`'s start-up (benchmarks/startup.py). These give the same values for the plain
arrays grower passes them.
"""

from __future__ import annotations

import numpy as np


def unique(values) -> np.ndarray:
    """The sorted distinct values of `values` (flattened), as ``np.unique`` gives them
    for an array without NaN (a NaN here stays once per occurrence)."""
    a = np.sort(np.asarray(values).ravel())
    if a.size < 2:
        return a
    keep = np.empty(a.size, dtype=bool)
    keep[0] = True
    np.not_equal(a[1:], a[:-1], out=keep[1:])
    return a[keep]


def median(values) -> float:
    """The median of a non-empty array, as ``np.median`` gives it (the mean of the two
    middle values for an even count)."""
    a = np.asarray(values, dtype=float).ravel()
    n = a.size
    lo, hi = (n - 1) // 2, n // 2
    if lo == hi:  # an odd count: the middle value itself
        return float(np.partition(a, lo)[lo])
    part = np.partition(a, [lo, hi])
    return float(np.mean(part[[lo, hi]]))
