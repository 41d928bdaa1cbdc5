"""kind = "magnet": a rigid, uniformly magnetised sphere of moment m = Br V / mu0.

Free to turn, it aligns with B: U = -m |B|; with a fixed north n: U = -m n . B (DESIGN.md,
Physics; U = -m . B, Jackson 5.72). B is harmonic outside the magnets, so its mean over the
sphere is its centre value (mean-value theorem): the point model is exact for this kind.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.probe.law import ProbeLaw
from trapscape.physics.probe.registry import register
from trapscape.scene.units import MU0


@register
@dataclass(frozen=True, eq=False)
class MagnetLaw(ProbeLaw):
    """A small permanent magnet, free to turn or with a fixed orientation.

    Parameters
    ----------
    moment : float
        |m| = Br V / mu0, A m^2.
    orientation : numpy.ndarray or None
        (3,) unit north when fixed; None when the probe turns to align with B.

    References
    ----------
    DESIGN.md, Physics definitions (magnet); J. D. Jackson, Classical Electrodynamics, 3rd ed.,
    5.72 (U = -m . B).
    """

    kind = "magnet"
    moment: float
    orientation: np.ndarray | None
    point_model_is_exact = True
    noun = "magnet probe"
    subject = "The magnet probe"

    @classmethod
    def from_probe(cls, probe, gravity) -> "MagnetLaw":
        """The law of a magnet probe: moment Br V / mu0 and the unit orientation if one is fixed.

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            The validated probe, SI units.
        gravity : array_like, shape (3,)
            Gravitational acceleration, m/s^2.

        Returns
        -------
        MagnetLaw
        """
        values = cls.sphere_values(probe, gravity)
        orientation = None
        if probe.orientation is not None:
            n = np.asarray(probe.orientation, float)
            orientation = n / np.linalg.norm(n)
        return cls(**values, moment=probe.remanence * values["volume"] / MU0,
                   orientation=orientation)

    @property
    def cone_at_field_zero(self) -> bool:
        """-m |B| is a cone at B = 0 when free to turn: an equilibrium Newton cannot converge to."""
        return self.orientation is None

    def magnetic_energy(self, B) -> np.ndarray:
        """-m |B| (free) or -m n . B (fixed).

        Parameters
        ----------
        B : array_like
            (N, 3) applied flux density, T.

        Returns
        -------
        numpy.ndarray
            (N,) J.
        """
        B = np.asarray(B, float).reshape(-1, 3)
        if self.orientation is None:
            return -self.moment * np.linalg.norm(B, axis=1)
        return -self.moment * (B @ self.orientation)

    def magnetic_force(self, B, G) -> np.ndarray:
        """m G^T B / |B| (free; 0 where B = 0) or m G^T n (fixed).

        Derived here: grad |B| = G^T B / |B|.

        Parameters
        ----------
        B : array_like
            (N, 3) T.
        G : array_like
            (N, 3, 3) G[n, i, j] = dB_i/dx_j, T/m.

        Returns
        -------
        numpy.ndarray
            (N, 3) N.
        """
        B = np.asarray(B, float).reshape(-1, 3)
        G = np.asarray(G, float).reshape(-1, 3, 3)
        if self.orientation is not None:
            return self.moment * np.einsum("nij,i->nj", G, self.orientation)
        GtB = np.einsum("nij,ni->nj", G, B)
        size = np.linalg.norm(B, axis=1)
        unit_GtB = np.divide(GtB, size[:, None], out=np.zeros_like(GtB), where=size[:, None] > 0)
        return self.moment * unit_GtB

    def volume_averaged(self, B, G, weights):
        """U = -m . <B> for a rigid uniformly magnetised sphere (Jackson 5.72 over the volume).

        The field is averaged first, then the law applied.

        Parameters
        ----------
        B : array_like
            (N, Q, 3) T.
        G : array_like
            (N, Q, 3, 3) T/m.
        weights : array_like
            (Q,) summing to 1.

        Returns
        -------
        U : numpy.ndarray
            (N,) J.
        F : numpy.ndarray
            (N, 3) N.

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.72 (U = -m . B), over the volume.
        """
        B = np.asarray(B, float)
        n, q = B.shape[:2]
        B_mean = np.einsum("nqi,q->ni", B, weights)
        G_mean = np.einsum("nqij,q->nij", np.asarray(G, float).reshape(n, q, 3, 3), weights)
        return self.magnetic_energy(B_mean), self.magnetic_force(B_mean, G_mean)

    def finite_model(self, field_model, positions=None):
        """None: the mean of B over the sphere is its centre value, so the point model is exact.

        Parameters
        ----------
        field_model : trapscape.physics.field.model.FieldModel
            The magnets' field.
        positions : array_like, shape (N, 3), optional
            Equilibria of the point model, m. Not used here.

        Returns
        -------
        None
        """
        return None
