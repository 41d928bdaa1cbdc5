"""The probe in the magnets' field: energy, force and Hessian (DESIGN.md, Physics).

The probe is a sphere of diameter d, volume V = pi d^3 / 6 and mass m_p = density V. Its energy
in the point model is the one of DESIGN.md, Physics, evaluated with the applied field at its
centre (B = mu0 H there, since an admissible centre is at least d/2 from every magnet):
- soft:   U = -mu0 V integral_0^|H| M(h) dh with M = chi_eff H capped at Js / mu0;
- magnet: U = -m |B| (free to turn) or -m n.B (fixed north n), m = Br V / mu0;
- weak:   U = -V chi_eff B^2 / (2 mu0);
plus gravity U_g = -m_p g.x. Forces are -grad U from B and G = dB_i/dx_j in closed form; the
Hessian is the central difference of that exact force.

Points are (N, 3) in m; energies in J, forces in N, Hessians in N/m.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.scene.units import MU0

HESSIAN_STEP_FRACTION = 1e-4  # FD step: this fraction of min(probe diameter, clearance)


def effective_susceptibility(chi: float) -> float:
    """chi_eff = 3 chi / (3 + chi): a sphere's induced M per applied H, M = 3(mu - mu0)/(mu +
    2 mu0) H0 (J. D. Jackson, Classical Electrodynamics, 3rd ed., section 5.11, with mu = mu0 (1
    + chi); Clausius-Mossotti)."""
    return 3.0 * chi / (3.0 + chi)


@dataclass(frozen=True, eq=False)
class ProbeLaw:
    """The probe's material law and mass: energy and force from B and G at its centre."""

    kind: str  # soft | magnet | weak
    diameter: float  # m
    volume: float  # m^3
    mass: float  # kg
    susceptibility: float  # SI volume chi (soft, weak); 0 for a magnet
    chi_eff: float  # 3 chi / (3 + chi); 0 for a magnet
    saturation: float | None  # Js in T (soft only)
    moment: float  # A m^2 (magnet only)
    orientation: np.ndarray | None  # magnet: fixed north (3,), None when free to turn
    gravity: np.ndarray  # (3,) m/s^2

    @classmethod
    def from_scene(cls, scene) -> "ProbeLaw":
        probe = scene.probe
        volume = probe.volume
        chi = probe.susceptibility if probe.kind in ("soft", "weak") else 0.0
        moment = probe.remanence * volume / MU0 if probe.kind == "magnet" else 0.0
        orientation = None
        if probe.kind == "magnet" and probe.orientation is not None:
            n = np.asarray(probe.orientation, float)
            orientation = n / np.linalg.norm(n)
        return cls(kind=probe.kind, diameter=float(probe.diameter), volume=volume,
                   mass=probe.mass, susceptibility=float(chi), chi_eff=effective_susceptibility(chi) if chi else 0.0,
                   saturation=probe.saturation if probe.kind == "soft" else None,
                   moment=moment, orientation=orientation,
                   gravity=np.asarray(scene.gravity, float))

    # -- soft probe ---------------------------------------------------------------------------

    @property
    def saturation_H(self) -> float:
        """|H| above which a saturating soft probe's M stays at Js / mu0, A/m."""
        if self.saturation is None or self.chi_eff <= 0.0:
            return np.inf
        return self.saturation / (MU0 * self.chi_eff)

    def induced_magnetization(self, H) -> np.ndarray:
        """M (N, 3) of a soft or weak probe in the applied H (N, 3): chi_eff H, capped at Js/mu0
        in magnitude (DESIGN.md, Physics)."""
        H = np.asarray(H, float).reshape(-1, 3)
        M = self.chi_eff * H
        if self.saturation is not None:
            size = np.linalg.norm(H, axis=1)
            cap = self.saturation / MU0
            too_big = self.chi_eff * size > cap
            M[too_big] *= (cap / (self.chi_eff * size[too_big]))[:, None]
        return M

    # -- energy and force from B, G -----------------------------------------------------------

    def magnetic_energy(self, B) -> np.ndarray:
        """(N,) J, from the applied B (N, 3) at the centre."""
        B = np.asarray(B, float).reshape(-1, 3)
        if self.kind == "magnet":
            if self.orientation is None:
                return -self.moment * np.linalg.norm(B, axis=1)
            return -self.moment * (B @ self.orientation)
        B2 = np.einsum("ni,ni->n", B, B)
        U = -self.volume * self.chi_eff * B2 / (2.0 * MU0)
        if self.kind == "soft" and self.saturation is not None:
            H = np.sqrt(B2) / MU0
            saturated = H > self.saturation_H
            # -V Js (|H| - Js / (2 mu0 chi_eff)) above saturation (DESIGN.md, Physics)
            U[saturated] = -self.volume * self.saturation * (
                H[saturated] - self.saturation / (2.0 * MU0 * self.chi_eff))
        return U

    def magnetic_force(self, B, G) -> np.ndarray:
        """-grad U (N, 3) in N from B (N, 3) and G[n, i, j] = dB_i/dx_j (N, 3, 3).

        grad (B.B)/2 = G^T B and grad |B| = G^T B / |B| (derived here), so
        soft/weak: F = V chi_eff / mu0 G^T B; saturated soft: F = V Js / mu0 G^T B/|B|;
        magnet: F = m G^T B/|B| (free), m G^T n (fixed)."""
        B = np.asarray(B, float).reshape(-1, 3)
        G = np.asarray(G, float).reshape(-1, 3, 3)
        GtB = np.einsum("nij,ni->nj", G, B)
        size = np.linalg.norm(B, axis=1)
        unit_GtB = np.divide(GtB, size[:, None], out=np.zeros_like(GtB), where=size[:, None] > 0)
        if self.kind == "magnet":
            if self.orientation is None:
                return self.moment * unit_GtB
            return self.moment * np.einsum("nij,i->nj", G, self.orientation)
        F = self.volume * self.chi_eff / MU0 * GtB
        if self.kind == "soft" and self.saturation is not None:
            saturated = size / MU0 > self.saturation_H
            F[saturated] = self.volume * self.saturation / MU0 * unit_GtB[saturated]
        return F

    def gravity_energy(self, points) -> np.ndarray:
        """U_g = -m_p g . x (DESIGN.md, Physics), J."""
        return -self.mass * (np.asarray(points, float).reshape(-1, 3) @ self.gravity)

    def gravity_force(self) -> np.ndarray:
        return self.mass * self.gravity


class ProbeModel:
    """Energy, force and Hessian of the probe at points; subclasses choose how the field is
    sampled (PointProbe: at the centre; physics.probe.finite.AveragedProbe: over the volume)."""

    description = ""

    def __init__(self, field_model, law: ProbeLaw):
        self.field_model = field_model
        self.law = law

    def applied_field(self, points):
        """B (N, 3) and G (N, 3, 3) of the magnets: mu0 H, valid where no magnet is."""
        points = np.asarray(points, float).reshape(-1, 3)
        H, G = self.field_model.applied_H(points, gradient=True)
        return MU0 * H, MU0 * G

    def magnetic_energy_and_force(self, points):
        raise NotImplementedError

    def energy_and_force(self, points):
        """U (N,) in J and F = -grad U (N, 3) in N, gravity included."""
        points = np.asarray(points, float).reshape(-1, 3)
        U, F = self.magnetic_energy_and_force(points)
        return U + self.law.gravity_energy(points), F + self.law.gravity_force()

    def energy(self, points) -> np.ndarray:
        return self.energy_and_force(points)[0]

    def force(self, points) -> np.ndarray:
        return self.energy_and_force(points)[1]

    def hessian_steps(self, points) -> np.ndarray:
        """A step well inside the field's smooth zone: 1e-4 of min(d, clearance), so that x +- h
        never straddles a magnet's surface (the centre is at clearance >= d/2 > h)."""
        points = np.asarray(points, float).reshape(-1, 3)
        d = self.law.diameter
        clearance = self.field_model.clearance(points)
        scale = np.clip(np.abs(clearance), 1e-6 * d, d)
        return HESSIAN_STEP_FRACTION * scale

    def hessian(self, points, directions=None, steps=None) -> np.ndarray:
        """Hessian of U projected on the directions, (N, k, k) in N/m: K_ab = -e_a . dF/de_b by
        central differences of the exact force, symmetrised.

        directions: (k, 3) orthonormal rows shared by all points, or (N, k, 3); default the
        three axes. steps: (N,) m, default hessian_steps(points)."""
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
    """The probe as a point: the field at its centre (DESIGN.md, Physics, small probes)."""

    description = "point probe (field at the centre)"

    def magnetic_energy_and_force(self, points):
        B, G = self.applied_field(points)
        return self.law.magnetic_energy(B), self.law.magnetic_force(B, G)

    def B(self, points) -> np.ndarray:
        return self.applied_field(points)[0]


# -- constraint projection --------------------------------------------------------------------

def allowed_basis(constraint) -> np.ndarray:
    """Orthonormal rows (k, 3) of the directions the constraint lets the probe move in."""
    return np.asarray(constraint.allowed_directions(), float).reshape(-1, 3)


def project_vectors(vectors, basis) -> np.ndarray:
    """Components (N, k) of vectors (N, 3) on the allowed directions (k, 3)."""
    return np.asarray(vectors, float).reshape(-1, 3) @ np.asarray(basis, float).T


def projected_force(force, basis) -> np.ndarray:
    """The part of the force (N, 3) the constraint does not take up, in world axes (N, 3)."""
    basis = np.asarray(basis, float)
    return project_vectors(force, basis) @ basis


def project_hessian(hessian, basis) -> np.ndarray:
    """A full Hessian (N, 3, 3) projected on the allowed directions: (N, k, k)."""
    basis = np.asarray(basis, float)
    return np.einsum("ai,nij,bj->nab", basis, np.asarray(hessian, float), basis)
