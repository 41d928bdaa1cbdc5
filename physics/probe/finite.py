"""A probe that is not small against the field's variation: energy averaged over its volume.

The energy density of DESIGN.md, Physics is averaged over the sphere by a product rule: Gauss-
Jacobi points in r (weight r^2) times a Lebedev set on the unit sphere. The rule of degree p
integrates every polynomial of total degree <= p over the ball exactly (derived here: a monomial of
degree j is r^j times an angular polynomial of degree j; the radial rule with n points is exact
for r^j, j <= 2n - 1, and the Lebedev set of order p for angular degree <= p). Degree 7 (the
default): 4 radii x 26 directions = 104 points.

For a magnet probe the averaging is over B, not over the energy: a rigid, uniformly magnetised
sphere has U = -m . <B> (Jackson 5.72 integrated over the volume) and B is harmonic outside the
magnets, so <B> over the ball equals B at its centre (mean-value theorem): the point model is
exact for magnet probes and the correction vanishes (to the rule's accuracy).

For soft and weak probes the volume average is the local approximation M(x) = chi_eff H0(x),
exact to first order in chi (U = -mu0 chi/2 integral H0^2 dV; Landau & Lifshitz, Electrodynamics
of Continuous Media, section 32), not the self-consistent induced field of a permeable sphere.
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.special import roots_jacobi

from trapscape.physics.probe.models import ProbeModel
from trapscape.scene.units import MU0

DEFAULT_DEGREE = 7
LEBEDEV_ORDERS = (3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31, 35, 41, 47, 53, 59, 65,
                  71, 77, 83, 89)


def lebedev_rule(order: int):
    """scipy.integrate.lebedev_rule, imported on first use: scipy.integrate brings in
    scipy.optimize, which costs every command 0.5 s at start-up.

    Parameters
    ----------
    order : int
        Polynomial order integrated exactly on the sphere (one of LEBEDEV_ORDERS).

    Returns
    -------
    directions : numpy.ndarray, shape (3, M)
        Unit vectors.
    weights : numpy.ndarray, shape (M,)
        Summing to 4 pi.

    References
    ----------
    V. I. Lebedev and D. N. Laikov, Doklady Mathematics 59, 477 (1999).
    """
    from scipy.integrate import lebedev_rule as rule

    return rule(order)


@lru_cache(maxsize=8)
def ball_rule(degree: int = DEFAULT_DEGREE):
    """A quadrature rule for the mean over the unit ball, exact to total degree `degree`.

    Parameters
    ----------
    degree : int
        Polynomial degree integrated exactly (see the module's docstring).

    Returns
    -------
    points : numpy.ndarray
        (Q, 3) nodes in the unit ball (dimensionless; scale by the radius), read-only.
    weights : numpy.ndarray
        (Q,) weights summing to 1, read-only.

    References
    ----------
    Gauss-Jacobi radii (weight r^2) times scipy.integrate.lebedev_rule directions (V. I.
    Lebedev & D. N. Laikov, Doklady Mathematics 59, 477 (1999)).
    """
    order = next((o for o in LEBEDEV_ORDERS if o >= degree), 31)
    directions, angular = lebedev_rule(order)  # (3, M), weights summing to 4 pi
    n_radial = max(1, math.ceil((degree + 1) / 2))
    x, w = roots_jacobi(n_radial, 0.0, 2.0)  # weight (1 + x)^2 on [-1, 1]
    radii = (1.0 + x) / 2.0
    radial = w / w.sum()
    points = (radii[:, None, None] * directions.T[None, :, :]).reshape(-1, 3)
    weights = (radial[:, None] * (angular / angular.sum())[None, :]).reshape(-1)
    points.setflags(write=False)
    weights.setflags(write=False)
    return points, weights


def rule_description(degree: int = DEFAULT_DEGREE) -> str:
    """One line saying which ball rule of ``degree`` is used (for reports).

    Parameters
    ----------
    degree : int
        Degree of the ball rule (ball_rule).

    Returns
    -------
    str
    """
    points, _ = ball_rule(degree)
    n_radial = max(1, math.ceil((degree + 1) / 2))
    return (f"volume average by a degree-{degree} rule over the sphere: {n_radial} Gauss-Jacobi "
            f"radii x {len(points) // n_radial} Lebedev directions = {len(points)} points")


class AveragedProbe(ProbeModel):
    """The probe's magnetic energy and force averaged over its volume (gravity is linear, so
    its centre value is exact). Same interface as physics.probe.laws.PointProbe; the law
    decides what is averaged (ProbeLaw.volume_averaged: the energy density, or B first for a
    rigid magnet).

    Parameters
    ----------
    field_model : trapscape.physics.field.model.FieldModel
    law : trapscape.physics.probe.law.ProbeLaw
    degree : int
        Degree of the ball rule (ball_rule); 7 gives 104 field samples per probe.

    References
    ----------
    Local approximation M(x) = chi_eff H0(x), exact to first order in chi (Landau & Lifshitz,
    Electrodynamics of Continuous Media, section 32).
    """

    def __init__(self, field_model, law, degree: int = DEFAULT_DEGREE):
        super().__init__(field_model, law)
        self.degree = degree
        self.description = rule_description(degree)
        unit, self.weights = ball_rule(degree)
        self.offsets = unit * (law.diameter / 2.0)

    def coarser(self):
        """The same average by the rule two degrees lower (to estimate this rule's error).

        Returns
        -------
        AveragedProbe or None
            None below degree 5.
        """
        if self.degree < 5:
            return None
        return AveragedProbe(self.field_model, self.law, self.degree - 2)

    def magnetic_energy_and_force(self, points):
        """Volume-averaged magnetic energy and force at probe centres (ProbeLaw.volume_averaged).

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

        References
        ----------
        Local approximation M(x) = chi_eff H0(x) (Landau & Lifshitz, Electrodynamics of Continuous
        Media, section 32); the quadrature of ball_rule.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        n, q = len(points), len(self.weights)
        samples = (points[:, None, :] + self.offsets[None, :, :]).reshape(-1, 3)
        B, G = self.applied_field(samples)
        return self.law.volume_averaged(B.reshape(n, q, 3), G.reshape(n, q, 3, 3), self.weights)


def relative_energy_correction(point_probe, averaged_probe, points) -> np.ndarray:
    """The relative change of the magnetic energy that the finite size makes.

    Parameters
    ----------
    point_probe, averaged_probe : ProbeModel
        The point model and a finite-size model of the same probe.
    points : array_like
        (N, 3) m.

    Returns
    -------
    numpy.ndarray
        (N,) |U_avg - U_point| / |U_point| (dimensionless), 0 where U_point vanishes.
    """
    points = np.asarray(points, float).reshape(-1, 3)
    U_point = point_probe.magnetic_energy_and_force(points)[0]
    U_mean = averaged_probe.magnetic_energy_and_force(points)[0]
    difference = np.abs(U_mean - U_point)
    scale = np.abs(U_point)
    return np.divide(difference, scale, out=np.zeros_like(difference), where=scale > 0)


# -- the exact response of a linear sphere ------------------------------------------------------

DEFAULT_MAX_DEGREE = 12
SAMPLE_DEPTH = 1e-6  # relative depth below the probe's surface where the field is sampled
# Degrees the clearance may choose (each on the smallest Lebedev set of order >= 2 L + 1).
RULE_DEGREES = (12, 15, 17, 20, 23, 26, 29, 32, 35, 38)
# L = DEGREES_PER_RATIO * a / gap: the applied field's multipoles on the sphere fall as
# (a / (a + gap))^l (the nearest source, an edge, is a + gap from the centre; derived here), so the
# degree for a fixed error grows as a / gap. 4 keeps 1e-3 of the stiffness over a cube's edge
# (measured in tests/physics/probe/test_multipole_rule.py).
DEGREES_PER_RATIO = 4.0
CHECK_FRACTION = 0.7  # the coarser degree that estimates a rule's truncation error


def degree_for_clearance(radius: float, clearance) -> np.ndarray:
    """The multipole degree for a probe of radius a whose centre is `clearance` from a magnet.

    L = 4 a / gap with gap = clearance - a, rounded up to RULE_DEGREES (at least 12, at most 38).

    Parameters
    ----------
    radius : float
        a, m.
    clearance : array_like, shape (N,)
        Distance from the probe's centre to the nearest magnet or plate, m.

    Returns
    -------
    numpy.ndarray of int, shape (N,)

    References
    ----------
    Derived here: the solid harmonics of a field whose nearest singularity is at R from the centre
    converge on the sphere r = a as (a / R)^l.
    """
    gap = np.maximum(np.asarray(clearance, float).reshape(-1) - radius, 1e-12 * radius)
    wanted = np.ceil(DEGREES_PER_RATIO * radius / gap)
    ladder = np.array(RULE_DEGREES)
    return ladder[np.minimum(np.searchsorted(ladder, wanted), len(ladder) - 1)]


def multipole_susceptibility(chi: float, degree: int) -> float:
    """chi_l = (2l+1) chi / (l (2 + chi) + 1), the l-th multipole's weight in the energy.

    The weight of the l-th multipole of the applied field in the energy of a linear sphere.

    Parameters
    ----------
    chi : float
        SI volume susceptibility (dimensionless).
    degree : int
        l >= 1.

    Returns
    -------
    float
        chi_l (dimensionless); chi_1 = chi_eff, chi_l -> chi for small chi, -> 2 + 1/l for
        chi -> inf.

    References
    ----------
    Derived here from the boundary conditions of the l-th solid harmonic at r = a, as in
    J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 for l = 1.
    """
    return (2 * degree + 1) * chi / (degree * (2.0 + chi) + 1.0)


@lru_cache(maxsize=12)
def _surface_harmonics(max_degree: int):
    """Lebedev directions (Q, 3); the conjugate harmonics of order m >= 0 times the weights, (R, Q)
    for l = 1..L; the degree of each row; and its multiplicity (1 for m = 0, 2 for m > 0: for a
    real function |h_l,-m| = |h_lm|)."""
    from scipy.special import sph_harm_y

    order = next(o for o in LEBEDEV_ORDERS if o >= 2 * max_degree + 1)
    directions, weights = lebedev_rule(order)
    x, y, z = directions
    theta = np.arccos(np.clip(z, -1.0, 1.0))
    phi = np.arctan2(y, x)
    rows, degrees, multiplicity = [], [], []
    for l in range(1, max_degree + 1):
        for m in range(0, l + 1):
            rows.append(np.conj(sph_harm_y(l, m, theta, phi)) * weights)
            degrees.append(l)
            multiplicity.append(1.0 if m == 0 else 2.0)
    return directions.T.copy(), np.array(rows), np.array(degrees), np.array(multiplicity)


class MultipoleProbe(ProbeModel):
    """A linear (unsaturated soft, or weak) sphere of any size in the magnets' field, exactly:
    U = -(mu0/2) a^3 sum_l chi_l / l sum_m |h_lm|^2, where h_lm are the coefficients of the
    applied radial field H.r on the sphere r = a in orthonormal spherical harmonics (derived
    here: U = -(mu0/2) integral M.H0 dV with the induced M of each solid harmonic; the l-th part
    of integral H0^2 dV over the ball is a^3 sum_m |h_lm|^2 / l by Green's identity). Valid while
    the ball holds no source (clearance >= d/2). Harmonics above the degree are dropped: their
    share of the energy is reported by truncation_share(), and coarser() gives the same sphere
    at a lower degree to estimate the error from two rules.

    Parameters
    ----------
    field_model : trapscape.physics.field.model.FieldModel
    law : trapscape.physics.probe.law.ProbeLaw
        A law with a linear_susceptibility (soft, weak); ValueError otherwise.
    max_degree : int or None
        Highest multipole degree l kept; None: chosen at each point from its clearance
        (degree_for_clearance), so that a probe near an edge keeps the multipoles the edge puts
        on it.

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (l = 1); higher l derived here.
    """

    def __init__(self, field_model, law, max_degree: int | None = None):
        super().__init__(field_model, law)
        if law.linear_susceptibility is None:
            raise ValueError(f"MultipoleProbe is for probes with an induced linear response, "
                             f"not {law.kind} probes")
        self.max_degree = max_degree
        self.radius = law.diameter / 2.0
        self._fixed = {}
        if max_degree is None:
            self.description = (
                f"exact linear sphere: applied field's multipoles up to a degree chosen from the "
                f"clearance (L = {DEGREES_PER_RATIO:g} a / gap, {RULE_DEGREES[0]} to "
                f"{RULE_DEGREES[-1]}) on Lebedev points")
            return
        # Sample just inside the surface, so that a probe touching a magnet never samples the
        # magnet's inside; the coefficients are carried out to r = a as (a / rho)^(l - 1).
        self.sample_radius = self.radius * (1.0 - SAMPLE_DEPTH)
        self.directions, harmonics, degrees, multiplicity = _surface_harmonics(max_degree)
        self.harmonics = harmonics * ((1.0 / (1.0 - SAMPLE_DEPTH)) ** (degrees - 1))[:, None]
        self.weights = np.array([multiplicity[i] * multipole_susceptibility(
            law.linear_susceptibility, l) / l for i, l in enumerate(degrees)])
        self.multiplicity = multiplicity
        self.description = (f"exact linear sphere: applied field's multipoles up to degree "
                            f"{max_degree} on {len(self.directions)} Lebedev points")

    def at_degree(self, degree: int) -> "MultipoleProbe":
        """The same sphere with its degree fixed (cached).

        Parameters
        ----------
        degree : int
            Highest multipole degree kept.

        Returns
        -------
        MultipoleProbe
        """
        degree = int(degree)
        if degree == self.max_degree:
            return self
        if degree not in self._fixed:
            self._fixed[degree] = MultipoleProbe(self.field_model, self.law, degree)
        return self._fixed[degree]

    def degrees_at(self, points) -> np.ndarray:
        """The degree used at each probe centre.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.

        Returns
        -------
        numpy.ndarray of int, shape (N,)
        """
        points = np.asarray(points, float).reshape(-1, 3)
        if self.max_degree is not None:
            return np.full(len(points), self.max_degree)
        return degree_for_clearance(self.radius, self.field_model.clearance(points))

    def rule_groups(self, points) -> list:
        """The points grouped by degree, each with the sphere at that degree fixed.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            m.

        Returns
        -------
        list of (MultipoleProbe, numpy.ndarray of int)
            Models of fixed degree and the indices of the points they serve.
        """
        degrees = self.degrees_at(points)
        return [(self.at_degree(L), np.flatnonzero(degrees == L)) for L in np.unique(degrees)]

    def coarser(self):
        """The sphere at CHECK_FRACTION of this degree, to estimate its truncation error.

        Returns
        -------
        MultipoleProbe or None
            None when the degree is chosen per point (fix it first with rule_groups).
        """
        if self.max_degree is None:
            return None
        return self.at_degree(max(1, round(CHECK_FRACTION * self.max_degree)))

    def scan_model(self):
        """The model a coarse scan of the energy uses: the default degree, whatever the clearance.

        Returns
        -------
        MultipoleProbe
        """
        return self.at_degree(DEFAULT_MAX_DEGREE)

    def _by_degree(self, points, evaluate):
        points = np.asarray(points, float).reshape(-1, 3)
        parts = [(idx, evaluate(model, points[idx])) for model, idx in self.rule_groups(points)]
        return parts, len(points)

    def _coefficients(self, points, gradient=True):
        points = np.asarray(points, float).reshape(-1, 3)
        n, q = len(points), len(self.directions)
        samples = (points[:, None, :] + self.sample_radius * self.directions[None]).reshape(-1, 3)
        if gradient:
            H, G = self.applied_H_and_gradient(samples)
        else:
            H, G = self.field_model.applied_H(samples), None
        H_r = np.einsum("nqi,qi->nq", H.reshape(n, q, 3), self.directions)
        h = H_r @ self.harmonics.T  # (n, R)
        if not gradient:
            return h, None
        dH_r = np.einsum("nqij,qi->nqj", G.reshape(n, q, 3, 3), self.directions)
        dh = self.harmonics @ dH_r  # (n, R, 3): a BLAS product, 10x the einsum
        return h, dh

    def magnetic_energy_and_force(self, points):
        """Exact magnetic energy and force of the linear sphere at probe centres.

        U = -(mu0/2) a^3 sum_l chi_l / l sum_m |h_lm|^2 up to the degree; F = -grad U from the
        gradient of the coefficients h_lm.

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m; the ball must hold no source (clearance >= d/2).

        Returns
        -------
        U : numpy.ndarray, shape (N,)
            J.
        F : numpy.ndarray, shape (N, 3)
            N.

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (l = 1); higher l derived here.
        """
        if self.max_degree is None:
            parts, n = self._by_degree(points, lambda m, x: m.magnetic_energy_and_force(x))
            U, F = np.zeros(n), np.zeros((n, 3))
            for idx, (u, f) in parts:
                U[idx], F[idx] = u, f
            return U, F
        h, dh = self._coefficients(points)
        scale = -0.5 * MU0 * self.radius**3
        U = scale * (np.abs(h) ** 2) @ self.weights
        grad = scale * 2.0 * np.einsum("l,nl,nlj->nj", self.weights, np.conj(h), dh).real
        return U, -grad

    def energy_without_force(self, points) -> np.ndarray:
        """Total energy (gravity included) without the field's gradient (for scans).

        Parameters
        ----------
        points : array_like, shape (N, 3)
            Probe centres, m.

        Returns
        -------
        numpy.ndarray, shape (N,)
            J.
        """
        points = np.asarray(points, float).reshape(-1, 3)
        if self.max_degree is None:
            parts, n = self._by_degree(points, lambda m, x: m.energy_without_force(x))
            U = np.zeros(n)
            for idx, u in parts:
                U[idx] = u
            return U
        h, _ = self._coefficients(points, gradient=False)
        magnetic = -0.5 * MU0 * self.radius**3 * (np.abs(h) ** 2) @ self.weights
        return magnetic + self.law.gravity_energy(points)

    def hessian(self, points, directions=None, steps=None) -> np.ndarray:
        """Hessian of U projected on the directions (ProbeModel.hessian), each point's
        differences taken with the degree chosen at its centre (no jump of rule between them).

        Parameters
        ----------
        points : array_like
            (N, 3) m.
        directions : array_like, optional
            (k, 3) shared, or (N, k, 3); default the three axes.
        steps : array_like, optional
            (N,) m.

        Returns
        -------
        numpy.ndarray
            (N, k, k) N/m.
        """
        if self.max_degree is not None:
            return super().hessian(points, directions, steps)
        points = np.asarray(points, float).reshape(-1, 3)
        E = np.eye(3) if directions is None else np.asarray(directions, float)
        k = E.shape[-2]
        K = np.zeros((len(points), k, k))
        for model, idx in self.rule_groups(points):
            K[idx] = model.hessian(points[idx], E[idx] if E.ndim == 3 else E,
                                   None if steps is None else np.broadcast_to(steps, (len(points),))[idx])
        return K

    def truncation_share(self, points) -> np.ndarray:
        """The share of integral H.r^2 over the sphere that degrees above max_degree carry.

        Parameters
        ----------
        points : array_like
            (N, 3) probe centres, m.

        Returns
        -------
        numpy.ndarray
            (N,) dimensionless: an estimate of the energy dropped (it bounds it when chi_l/l
            falls with l).
        """
        if self.max_degree is None:
            parts, n = self._by_degree(points, lambda m, x: m.truncation_share(x))
            share = np.zeros(n)
            for idx, s in parts:
                share[idx] = s
            return share
        h, _ = self._coefficients(points, gradient=False)
        points = np.asarray(points, float).reshape(-1, 3)
        n, q = len(points), len(self.directions)
        samples = (points[:, None, :] + self.sample_radius * self.directions[None]).reshape(-1, 3)
        H = self.field_model.applied_H(samples).reshape(n, q, 3)
        H_r = np.einsum("nqi,qi->nq", H, self.directions)
        _, weights = lebedev_rule(next(o for o in LEBEDEV_ORDERS if o >= 2 * self.max_degree + 1))
        total = (H_r**2) @ weights
        kept = (np.abs(h) ** 2) @ self.multiplicity
        return np.divide(np.abs(total - kept), total, out=np.zeros_like(total), where=total > 0)
