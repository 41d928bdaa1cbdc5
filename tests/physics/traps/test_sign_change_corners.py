"""sign_change_mask (physics/traps/candidates.py) folds the cells' corners one at a time; the
plain form below reduces the stacked corner arrays. Minimum, maximum and logical and are exact,
so both give the same cells, bit for bit, on lines, planes and volumes with zeros and NaN."""
from types import SimpleNamespace

import numpy as np
import pytest

from trapscape.physics.traps.candidates import corner_slices, sign_change_mask


def _stacked(grid):
    shape, k = grid.shape, len(grid.shape)
    ok = grid.admissible.reshape(shape)
    components = (grid.force_N @ grid.axes.T).reshape(shape + (k,))
    slices = corner_slices(k)
    all_ok = np.logical_and.reduce([ok[s] for s in slices])
    low = np.minimum.reduce([components[s] for s in slices])
    high = np.maximum.reduce([components[s] for s in slices])
    return all_ok & np.all((low <= 0.0) & (high >= 0.0), axis=-1)


@pytest.mark.parametrize("shape", [(41,), (17, 23), (9, 11, 13)])
def test_corner_by_corner_equals_the_stacked_reduction(shape):
    rng = np.random.default_rng(len(shape))
    n, k = int(np.prod(shape)), len(shape)
    force = rng.normal(size=(n, 3))
    force[rng.random(n) < 0.05] = 0.0
    force[rng.random(n) < 0.02, 0] = np.nan
    axes = np.linalg.qr(rng.normal(size=(3, 3)))[0][:k]
    grid = SimpleNamespace(shape=shape, admissible=rng.random(n) < 0.9, force_N=force, axes=axes)
    expected = _stacked(grid)
    assert expected.any() and not expected.all()
    np.testing.assert_array_equal(sign_change_mask(grid), expected)
