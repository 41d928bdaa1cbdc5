"""A wide probe's ball average and band go by FFT (scipy.signal, imported only on that path): the
same cells and means as the direct sums of scipy.ndimage, the reference the small kernels use."""
from __future__ import annotations

import numpy as np
from scipy import ndimage

from trapscape.physics.traps.finite_scan import (
    DIRECT_KERNEL_CELLS,
    _ball_mean,
    _dilated,
    ball_kernel,
)


def test_a_wide_ball_by_fft_equals_the_direct_sums():
    kernel = ball_kernel(9.3)  # 19^3 cells
    assert kernel.size > DIRECT_KERNEL_CELLS
    rng = np.random.default_rng(3)
    values = rng.normal(size=(30, 26, 28))
    direct = ndimage.correlate(values, kernel, mode="constant", cval=0.0)
    # tolerance chosen before looking: FFT rounding on sums of about 2,500 terms of size 1
    np.testing.assert_allclose(_ball_mean(values, kernel), direct, rtol=0, atol=1e-10)
    mask = np.zeros(values.shape, bool)
    mask[4, 5, 6] = mask[20, 18, 3] = True
    expected = ndimage.binary_dilation(mask, structure=kernel > 0)
    assert np.array_equal(_dilated(mask, kernel), expected) and expected.sum() > 1000
