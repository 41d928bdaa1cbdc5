"""The probe at points: energy, force and Hessian from a law and the field model.

ProbeModel samples the magnets' applied field and hands it to the probe's law; PointProbe takes
the field at the centre, physics.probe.finite the field over the volume. The Hessian is the
central difference of the exact force.
"""
from __future__ import annotations

import numpy as np

from trapscape.scene.units import MU0

HESSIAN_STEP_FRACTION = 1e-4  # FD step: this fraction of min(probe diameter, clearance)
# A model keeps the field of its last call up to this many sample points (about 5 MB): asked
# again at the very same points (the finite-size correction at the equilibria, then the first
# step of Newton's method from them) it answers without the field.
REMEMBERED_SAMPLES = 1 << 15


class ProbeModel:
    """Energy, force and Hessian of the probe at points; subclasses choose how the field is
    sampled (PointProbe: at the centre; physics.probe.finite.AveragedProbe: over the volume).

    Parameters
    ----------
    field_model : trapscape.physics.field.model.FieldModel
        Gives the applied H and its gradient, and the clearance to the magnets.
    law : trapscape.physics.probe.law.ProbeLaw
        The probe kind's law.
    """

    description = ""

    def __init__(self, field_model, law):
        self.field_model = field_model
        self.law = law
        self._last_field = None  # (sample points, H, dH/dx) of the last applied_H_and_gradient

    def applied_H_and_gradient(self, samples):
        """The magnets' H and its gradient at sample points; the last call's arrays again when
        the points are bit for bit the last call's (at most REMEMBERED_SAMPLES of them).

        Parameters
        ----------
        samples : array_like, shape (N, 3)
            m.

        Returns
        -------
        H : numpy.ndarray, shape (N, 3)
            A/m.
        G : numpy.ndarray, shape (N, 3, 3)
            G[n, i, j] = dH_i/dx_j, A/m^2.
        """
        samples = np.asarray(samples, float).reshape(-1, 3)
        last = self._last_field
        if last is not None and last[0].shape == samples.shape and \
                last[0].tobytes() == samples.tobytes():
            return last[1].copy(), last[2].copy()
        H, G = self.field_model.applied_H(samples, gradient=True)
        if len(samples) <= REMEMBERED_SAMPLES:
            self._last_field = (samples.copy(), H.copy(), G.copy())
        return H, G

    def applied_field(self, points):
        """The magnets' B = mu0 H and its gradient, valid where no magnet is.

        Parameters
        ----------
        points : array_like
            (N, 3) m.

        Returns
        -------
        B : numpy.ndarray
            (N, 3) T.
        G : numpy.ndarray
            (N, 3, 3) G[n, i, j] = dB_i/dx_j, T/m.
        """
        H, G = self.applied_H_and_gradient(points)
        return MU0 * H, MU0 * G

    def magnetic_energy_and_force(self, points):
        """Magnetic energy and force at probe centres; each subclass samples the field its own way.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        U : numpy.ndarray, shape (N,)
            J.
        F : numpy.ndarray, shape (N, 3)
            N.

        Raises
        ------
        NotImplementedError
            Always, here: a subclass gives it.
        """
        raise NotImplementedError(f"{type(self).__name__} does not sample the field")

    def energy_and_force(self, points):
        """Total energy and force, gravity included.

        Parameters
        ----------
        points : array_like
            (N, 3) probe centres, m.

        Returns
        -------
        U : numpy.ndarray
            (N,) J.
        F : numpy.ndarray
            (N, 3) F = -grad U, N.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        U, F = self.magnetic_energy_and_force(points)
        return U + self.law.gravity_energy(points), F + self.law.gravity_force()

    def energy(self, points) -> np.ndarray:
        """Total energy, gravity included.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            J.
        """
        return self.energy_and_force(points)[0]

    def force(self, points) -> np.ndarray:
        """Total force, gravity included.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            N.
        """
        return self.energy_and_force(points)[1]

    def energy_without_force(self, points) -> np.ndarray:
        """Total energy, gravity included, where the force is not wanted (a model may save the
        field's gradient).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            J.
        """
        return self.energy(points)

    def rule_groups(self, points) -> list:
        """The points grouped by the quadrature rule a model chooses near them, with the model
        whose rule is fixed for each group (solve with one rule per group: no jump between
        rules inside Newton's method). Here: one group, this model.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.

        Returns
        -------
        list of (ProbeModel, numpy.ndarray of int)
        """
        return [(self, np.arange(len(np.asarray(points, float).reshape(-1, 3))))]

    def coarser(self):
        """The same model with a coarser rule, to estimate the rule's error from two rules.

        Returns
        -------
        ProbeModel or None
            None here: no rule (the point model is a point).
        """
        return None

    def scan_model(self):
        """The model a coarse scan of the energy uses (a cheaper rule where the model has one).

        Returns
        -------
        ProbeModel
            This one here.
        """
        return self

    def hessian_steps(self, points) -> np.ndarray:
        """Finite-difference steps: 1e-4 of min(d, clearance) (clearance held above 1e-6 d).

        So that x +- h never straddles a magnet's surface (the centre is at clearance >= d/2 > h).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            m.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        d = self.law.diameter
        clearance = self.field_model.clearance(points)
        scale = np.clip(np.abs(clearance), 1e-6 * d, d)
        return HESSIAN_STEP_FRACTION * scale

    def hessian(self, points, directions=None, steps=None) -> np.ndarray:
        """Hessian of U projected on the directions, K_ab = -e_a . dF/de_b.

        By central differences of the exact force, symmetrised.

        Parameters
        ----------
        points : array_like
            (N, 3) m.
        directions : array_like, optional
            (k, 3) orthonormal rows shared by all points, or (N, k, 3); default the three axes.
        steps : array_like, optional
            (N,) m; default hessian_steps(points).

        Returns
        -------
        numpy.ndarray
            (N, k, k) N/m.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        n = len(points)
        if directions is None:
            directions = np.eye(3)
        E = np.broadcast_to(np.asarray(directions, float), (n,) + np.shape(directions)[-2:])
        k = E.shape[1]
        if n == 0 or k == 0:
            return np.zeros((n, k, k))
        h = self.hessian_steps(points) if steps is None else np.broadcast_to(steps, (n,))
        offsets = h[:, None, None, None] * np.stack([E, -E], axis=2)  # (n, k, 2, 3)
        shifted = (points[:, None, None, :] + offsets).reshape(-1, 3)
        F = self.force(shifted).reshape(n, k, 2, 3)
        dF = (F[:, :, 0] - F[:, :, 1]) / (2.0 * h[:, None, None])  # (n, k_b, 3): dF/de_b
        K = -np.einsum("nai,nbi->nab", E, dF)
        return 0.5 * (K + np.transpose(K, (0, 2, 1)))


class PointProbe(ProbeModel):
    """The probe as a point: the law applied to the field at its centre (DESIGN.md, Physics,
    small probes)."""

    description = "point probe (field at the centre)"

    def magnetic_energy_and_force(self, points):
        """Magnetic energy and force from the field at the centres (the law at a point).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        U : numpy.ndarray, shape (N,)
            J.
        F : numpy.ndarray, shape (N, 3)
            N.
        """
        B, G = self.applied_field(points)
        return self.law.magnetic_energy(B), self.law.magnetic_force(B, G)

    def B(self, points) -> np.ndarray:
        """The applied B, the magnets' mu0 H, at points.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            T.
        """
        return self.applied_field(points)[0]
