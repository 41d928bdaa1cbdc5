"""Forces and Hessians projected on the directions a constraint lets the probe move in
(DESIGN.md, Physics: free 3, line 1, plane 2)."""
from __future__ import annotations

import numpy as np


def allowed_basis(constraint) -> np.ndarray:
    """Orthonormal rows of the directions the constraint allows.

    Parameters
    ----------
    constraint : trapscape.scene.model.Constraint

    Returns
    -------
    numpy.ndarray
        (k, 3), k = 3 (free), 1 (line) or 2 (plane).
    """
    return np.asarray(constraint.allowed_directions(), float).reshape(-1, 3)


def project_vectors(vectors, basis) -> np.ndarray:
    """Components of vectors on the allowed directions.

    Parameters
    ----------
    vectors : array_like, shape (N, 3)
        Any unit (a force in N, a displacement in m).
    basis : array_like, shape (k, 3)
        Orthonormal rows of the allowed directions (allowed_basis).

    Returns
    -------
    numpy.ndarray, shape (N, k)
        Same unit as ``vectors``.
    """
    return np.asarray(vectors, float).reshape(-1, 3) @ np.asarray(basis, float).T


def projected_force(force, basis) -> np.ndarray:
    """The part of the force the constraint does not take up, in world axes.

    Parameters
    ----------
    force : array_like, shape (N, 3)
        N.
    basis : array_like, shape (k, 3)
        Orthonormal rows of the allowed directions (allowed_basis).

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        N.
    """
    basis = np.asarray(basis, float)
    return project_vectors(force, basis) @ basis


def project_hessian(hessian, basis) -> np.ndarray:
    """A full Hessian projected on the allowed directions, K_ab = e_a . K e_b.

    Parameters
    ----------
    hessian : array_like, shape (N, 3, 3)
        N/m.
    basis : array_like, shape (k, 3)
        Orthonormal rows of the allowed directions (allowed_basis).

    Returns
    -------
    numpy.ndarray, shape (N, k, k)
        N/m.
    """
    basis = np.asarray(basis, float)
    return np.einsum("ai,nij,bj->nab", basis, np.asarray(hessian, float), basis)
