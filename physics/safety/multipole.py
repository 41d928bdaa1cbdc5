"""A uniformly magnetised part's far field to second order: its dipole at the volume centroid
plus the term of the volume's second moments.

The potential of a uniformly magnetised body is phi = -(1/4 pi) M . grad Psi with
Psi(r) = int dV' / |r - r'| (Coulombian model; J. D. Jackson, Classical Electrodynamics, 3rd ed.,
5.98), so H = (1/4 pi) grad (M . grad Psi). Expanding 1/|R - x'| about the centroid c (R = r - c;
Jackson 4.1) gives Psi = V/R + (1/2) Q_kl d_k d_l (1/R) + O(a^3/R^4), Q_kl = int x'_k x'_l dV'
(the first moments vanish at the centroid), hence
    H_i = (1/4 pi) M_j [V d_i d_j (1/R) + (1/2) Q_kl d_i d_j d_k d_l (1/R)] + O((a/R)^3 of the dipole),
the first term the point dipole (Jackson 5.56). The error left is of third order in a/R (fourth
for a centrosymmetric part), derived here.
"""
from __future__ import annotations

import numpy as np


def second_moments(vertices, faces) -> tuple:
    """Volume, centroid and second moments about the centroid of a closed, outward mesh.

    Parameters
    ----------
    vertices : numpy.ndarray, shape (V, 3)
        m.
    faces : numpy.ndarray of int, shape (F, 3)
        Counter-clockwise seen from outside.

    Returns
    -------
    volume : float
        m^3.
    centroid : numpy.ndarray, shape (3,)
        m.
    Q : numpy.ndarray, shape (3, 3)
        int (x - c)_k (x - c)_l dV, m^5.

    References
    ----------
    Signed tetrahedra (origin, a, b, c): int x x^T dV = v/20 (sum_k p_k p_k^T + s s^T), s the sum
    of the four vertices (e.g. F. Tonon, J. Math. Stat. 1, 8 (2005)).
    """
    a, b, c = (np.asarray(vertices, float)[np.asarray(faces)[:, k]] for k in range(3))
    v = np.einsum("ij,ij->i", a, np.cross(b, c)) / 6.0
    volume = v.sum()
    centroid = (v[:, None] * (a + b + c)).sum(axis=0) / (4.0 * volume)
    s = a + b + c
    outer = (np.einsum("ni,nj->nij", a, a) + np.einsum("ni,nj->nij", b, b)
             + np.einsum("ni,nj->nij", c, c) + np.einsum("ni,nj->nij", s, s))
    about_origin = np.einsum("n,nij->ij", v / 20.0, outer)
    Q = about_origin - volume * np.outer(centroid, centroid)
    return float(volume), centroid, Q


def multipole_H(points, centroid, moment, magnetization, Q) -> np.ndarray:
    """H of a uniformly magnetised part far from it, to second order (module docstring).

    Parameters
    ----------
    points : numpy.ndarray, shape (N, 3)
        World points, m.
    centroid : array_like, shape (3,)
        World volume centroid, m.
    moment : array_like, shape (3,)
        M V, A m^2.
    magnetization : array_like, shape (3,)
        M (world), A/m.
    Q : numpy.ndarray, shape (3, 3)
        World second moments about the centroid, m^5 (second_moments, rotated).

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        A/m.
    """
    R = np.asarray(points, float) - centroid
    r2 = np.einsum("ij,ij->i", R, R)
    r = np.sqrt(r2)
    n = R / r[:, None]
    m = np.asarray(moment, float)
    # dipole: (3 n (m.n) - m) / (4 pi r^3)
    mn = n @ m
    H = (3.0 * n * mn[:, None] - m) / (4.0 * np.pi * r[:, None] ** 3)
    # (1/8 pi) M_j Q_kl d_i d_j d_k d_l (1/r), with Q made traceless (d_k d_k (1/r) = 0):
    # d^4(1/r) = [105 n n n n - 15 (delta n n, 6 terms) + 3 (delta delta, 3 terms)] / r^5
    Qt = Q - np.trace(Q) / 3.0 * np.eye(3)
    Mv = np.asarray(magnetization, float)
    Mn = n @ Mv
    Qn = n @ Qt  # (N, 3): Q_kl n_l
    nQn = np.einsum("ij,ij->i", Qn, n)
    MQn = Qn @ Mv  # M_k Q_kl n_l
    term = (105.0 * n * (Mn * nQn)[:, None]
            - 15.0 * (Mv[None, :] * nQn[:, None] + 2.0 * Qn * Mn[:, None]
                      + 2.0 * n * MQn[:, None])
            + 6.0 * (Qt @ Mv)[None, :])
    # the 6 delta-n-n terms contracted with M_j Q_kl (traceless Q drops delta_kl n_i n_j):
    # delta_ij: M_i nQn; delta_ik, delta_il: 2 Q_il n_l (M.n); delta_jk, delta_jl: 2 n_i (M Q n);
    # the 3 delta-delta terms: delta_ij delta_kl -> 0, delta_ik delta_jl + delta_il delta_jk -> 2 Q M
    return H + term / (8.0 * np.pi * r[:, None] ** 5)
