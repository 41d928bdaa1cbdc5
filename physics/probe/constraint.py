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
    """Components of vectors (N, 3) on the allowed directions (k, 3): (N, k), same unit."""
    return np.asarray(vectors, float).reshape(-1, 3) @ np.asarray(basis, float).T


def projected_force(force, basis) -> np.ndarray:
    """The part of the force (N, 3) in N the constraint does not take up, in world axes (N, 3)."""
    basis = np.asarray(basis, float)
    return project_vectors(force, basis) @ basis


def project_hessian(hessian, basis) -> np.ndarray:
    """A full Hessian (N, 3, 3) projected on the allowed directions (k, 3): (N, k, k), N/m."""
    basis = np.asarray(basis, float)
    return np.einsum("ai,nij,bj->nab", basis, np.asarray(hessian, float), basis)
