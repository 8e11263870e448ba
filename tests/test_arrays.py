"""grower.arrays: the same values as numpy's own unique and median."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from grower import arrays

FLOATS = st.floats(allow_nan=False, width=64)  # infinities included


@settings(max_examples=200, deadline=None)
@given(
    hnp.arrays(
        st.sampled_from([np.float64, np.int64]),
        hnp.array_shapes(min_dims=1, max_dims=2, max_side=40),
        elements=st.integers(-5, 5),
    )
)
def test_unique_is_numpys_on_repeated_values(a):
    got = arrays.unique(a)
    assert got.dtype == np.unique(a).dtype
    np.testing.assert_array_equal(got, np.unique(a))


@settings(max_examples=200, deadline=None)
@given(hnp.arrays(np.float64, st.integers(0, 60), elements=FLOATS))
def test_unique_is_numpys_on_any_floats(a):
    np.testing.assert_array_equal(arrays.unique(a), np.unique(a))


@pytest.mark.filterwarnings("ignore:overflow encountered:RuntimeWarning")  # numpy's too
@settings(max_examples=300, deadline=None)
@given(hnp.arrays(np.float64, st.integers(1, 60), elements=FLOATS))
def test_median_is_numpys_to_the_bit(a):
    got, want = arrays.median(a), float(np.median(a))
    assert got == want or (np.isnan(got) and np.isnan(want))  # inf and -inf: NaN in both


def test_median_of_integers_and_lists():
    assert arrays.median([8.98846567431158e307]) == 8.98846567431158e307  # no x + x overflow
    assert arrays.median([3, 1, 2]) == 2.0
    assert arrays.median([4, 1, 2, 3]) == 2.5
