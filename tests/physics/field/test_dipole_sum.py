"""Dipole sums: the direct numba kernel, the FMM (fmm3dpy) and the plain numpy reference."""
import numpy as np
import pytest

from trapscape.physics.field import fmm
from trapscape.physics.field.dipole_sum import choose_method, dipole_H, dipole_H_numpy


def random_set(n_sources=400, n_targets=300, seed=0):
    rng = np.random.default_rng(seed)
    positions = rng.uniform(-1.0, 1.0, (n_sources, 3)) * 0.01
    moments = rng.normal(size=(n_sources, 3))
    targets = rng.uniform(-3.0, 3.0, (n_targets, 3)) * 0.01
    return targets, positions, moments


def test_single_dipole_on_axis_and_equator():
    m = 2.5
    r = 0.03
    targets = np.array([[0.0, 0.0, r], [r, 0.0, 0.0], [0.0, 0.0, -r]])
    H = dipole_H(targets, np.zeros((1, 3)), np.array([[0.0, 0.0, m]]), method="direct")
    k = m / (4 * np.pi * r**3)
    # Jackson, Classical Electrodynamics 3rd ed., eq. 5.56: 2m/(4 pi r^3) on the axis,
    # -m/(4 pi r^3) on the equator.
    np.testing.assert_allclose(H, [[0, 0, 2 * k], [0, 0, -k], [0, 0, 2 * k]], rtol=1e-14, atol=1e-14 * k)


def test_gradient_against_finite_differences():
    targets, positions, moments = random_set(50, 40, seed=1)
    H, G = dipole_H(targets, positions, moments, gradient=True, method="direct")
    step = 1e-7
    for j in range(3):
        e = np.zeros(3)
        e[j] = step
        plus = dipole_H(targets + e, positions, moments, method="direct")
        minus = dipole_H(targets - e, positions, moments, method="direct")
        # central differences, truncation error ~ step^2 |d3H| (derived here)
        np.testing.assert_allclose(G[:, :, j], (plus - minus) / (2 * step),
                                   rtol=1e-5, atol=1e-6 * np.abs(G).max())
    np.testing.assert_allclose(H, dipole_H(targets, positions, moments, method="direct"), rtol=1e-13)
    # curl H = 0 and div H = 0 off the sources: G symmetric and traceless (Jackson, ch. 5)
    np.testing.assert_allclose(G, np.swapaxes(G, 1, 2), atol=1e-12 * np.abs(G).max())
    np.testing.assert_allclose(np.trace(G, axis1=1, axis2=2), 0.0, atol=1e-11 * np.abs(G).max())


def test_direct_agrees_with_numpy_broadcast():
    targets, positions, moments = random_set(seed=2)
    direct = dipole_H(targets, positions, moments, method="direct")
    plain = dipole_H_numpy(targets, positions, moments, chunk_pairs=7_000)  # several chunks
    np.testing.assert_allclose(direct, plain, rtol=1e-11, atol=1e-12 * np.abs(plain).max())


@pytest.mark.parametrize("processes", [1, 2])
def test_fmm_agrees_with_direct_to_its_tolerance(monkeypatch, processes):
    monkeypatch.setattr(fmm, "MIN_TARGETS_FOR_SPLIT", 50)  # so that 300 targets are split
    targets, positions, moments = random_set(seed=3)
    H_ref, G_ref = dipole_H(targets, positions, moments, gradient=True, method="direct")
    for eps in (1e-4, 1e-10):
        H, G = fmm.fmm_dipole_H(targets, positions, moments, gradient=True, eps=eps,
                                processes=processes)
        # fmm3dpy's eps is relative to the overall field scale, not pointwise
        assert np.abs(H - H_ref).max() <= 10 * eps * np.abs(H_ref).max()
        assert np.abs(G - G_ref).max() <= 10 * eps * np.abs(G_ref).max()
    H_only = dipole_H(targets, positions, moments, method="fmm", eps=1e-10)
    np.testing.assert_allclose(H_only, H, atol=1e-9 * np.abs(H_ref).max())


def test_fmm_self_test_catches_a_convention_change(monkeypatch):
    fmm.fmm_self_test()  # passes with the installed fmm3dpy
    original = fmm._fmm_share

    def sign_flipped(*args):
        H, G6 = original(*args)
        return -H, G6

    monkeypatch.setattr(fmm, "_fmm_share", sign_flipped)
    with pytest.raises(RuntimeError, match="conventions"):
        fmm.fmm_self_test()

    def hessian_reordered(*args):
        H, G6 = original(*args)
        return H, G6[:, [0, 1, 2, 5, 4, 3]]

    monkeypatch.setattr(fmm, "_fmm_share", hessian_reordered)
    with pytest.raises(RuntimeError, match="conventions"):
        fmm.fmm_self_test()


def test_target_on_a_source_skips_it():
    targets, positions, moments = random_set(30, 5, seed=4)
    targets[0] = positions[7]
    H, G = dipole_H(targets, positions, moments, gradient=True, method="direct")
    assert np.all(np.isfinite(H)) and np.all(np.isfinite(G))
    others = np.delete(np.arange(30), 7)
    np.testing.assert_allclose(H[0], dipole_H(targets[:1], positions[others], moments[others],
                                              method="direct")[0], rtol=1e-13)
    np.testing.assert_allclose(dipole_H_numpy(targets, positions, moments), H, rtol=1e-11,
                               atol=1e-12 * np.abs(H).max())
    targets[1] = positions[3] + 1e-13  # within COINCIDENT_M, but not on it to rounding
    H, G = dipole_H(targets, positions, moments, gradient=True, method="direct")
    H_fmm, G_fmm = fmm.fmm_dipole_H(targets, positions, moments, gradient=True, eps=1e-10)
    np.testing.assert_allclose(H_fmm, H, rtol=1e-8, atol=1e-9 * np.abs(H).max())
    np.testing.assert_allclose(G_fmm, G, rtol=1e-8, atol=1e-9 * np.abs(G).max())


def test_auto_picks_direct_for_small_and_fmm_for_large_work():
    assert choose_method(100, 100) == "direct"
    assert choose_method(2_000_000, 200_000) == "fmm"
    targets, positions, moments = random_set(20, 10, seed=5)
    np.testing.assert_array_equal(dipole_H(targets, positions, moments),
                                  dipole_H(targets, positions, moments, method="direct"))


def test_bad_arguments():
    targets, positions, moments = random_set(5, 5)
    with pytest.raises(ValueError, match="unknown method"):
        dipole_H(targets, positions, moments, method="fast")
    with pytest.raises(ValueError, match="shape"):
        dipole_H(targets[:, :2], positions, moments)


def test_empty_inputs():
    targets, positions, moments = random_set(5, 5)
    assert dipole_H(targets[:0], positions, moments, method="direct").shape == (0, 3)
    H, G = fmm.fmm_dipole_H(targets, positions[:0], moments[:0], gradient=True)
    assert H.shape == (5, 3) and G.shape == (5, 3, 3) and not H.any()
