"""kind = "soft": a ferromagnetic sphere (steel), induced M = chi_eff H capped at Js / mu0.

U = -mu0 V integral_0^|H| M(h) dh: -mu0 V chi_eff H^2 / 2 below the knee |H| = Js / (mu0
chi_eff), -V Js (|H| - Js / (2 mu0 chi_eff)) above it (DESIGN.md, Physics; chi_eff from
Jackson 5.11).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.probe.finite import AveragedProbe, MultipoleProbe
from trapscape.physics.probe.kinds.induced import InducedLaw, grad_half_B2
from trapscape.physics.probe.registry import register
from trapscape.scene.units import MU0


@register
@dataclass(frozen=True, eq=False)
class SoftLaw(InducedLaw):
    """A soft-magnetic sphere with optional saturation.

    Parameters
    ----------
    saturation : float or None
        Saturation polarisation Js, T; None for a linear material.

    References
    ----------
    DESIGN.md, Physics definitions (soft); J. D. Jackson, Classical Electrodynamics, 3rd ed.,
    5.11 (chi_eff).
    """

    kind = "soft"
    noun = "soft-iron bead"
    subject = "The steel probe"

    saturation: float | None

    @classmethod
    def from_probe(cls, probe, gravity) -> "SoftLaw":
        """The law of a soft probe: the induced values and the saturation polarisation Js.

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            The validated probe, SI units.
        gravity : array_like, shape (3,)
            Gravitational acceleration, m/s^2.

        Returns
        -------
        SoftLaw
        """
        return cls(**cls.sphere_values(probe, gravity), **cls.induced_values(probe),
                   saturation=probe.saturation)

    @property
    def saturates(self) -> bool:
        return self.saturation is not None

    @property
    def saturation_H(self) -> float:
        """The knee |H| = Js / (mu0 chi_eff) above which M stays at Js / mu0, A/m (inf when the
        probe does not saturate)."""
        if self.saturation is None or self.chi_eff <= 0.0:
            return np.inf
        return self.saturation / (MU0 * self.chi_eff)

    def induced_magnetization(self, H) -> np.ndarray:
        """M = chi_eff H capped at |M| = Js / mu0 (DESIGN.md, Physics).

        Parameters
        ----------
        H : array_like
            (N, 3) applied field, A/m.

        Returns
        -------
        numpy.ndarray
            (N, 3) magnetisation, A/m.

        References
        ----------
        DESIGN.md, Physics definitions (soft); J. D. Jackson, Classical Electrodynamics, 3rd ed.,
        5.11 (chi_eff).
        """
        H = np.asarray(H, float).reshape(-1, 3)
        M = self.chi_eff * H
        if self.saturation is not None:
            size = np.linalg.norm(H, axis=1)
            cap = self.saturation / MU0
            too_big = self.chi_eff * size > cap
            M[too_big] *= (cap / (self.chi_eff * size[too_big]))[:, None]
        return M

    def magnetic_energy(self, B) -> np.ndarray:
        """-mu0 V integral_0^|H| M(h) dh with H = B / mu0 (DESIGN.md, Physics).

        Parameters
        ----------
        B : array_like
            (N, 3) applied flux density, T.

        Returns
        -------
        numpy.ndarray
            (N,) J.

        References
        ----------
        DESIGN.md, Physics definitions (soft); J. D. Jackson, Classical Electrodynamics, 3rd ed.,
        5.11 (chi_eff).
        """
        U = self.linear_energy(B)
        if self.saturation is not None:
            B = np.asarray(B, float).reshape(-1, 3)
            H = np.sqrt(np.einsum("ni,ni->n", B, B)) / MU0
            saturated = H > self.saturation_H
            # -V Js (|H| - Js / (2 mu0 chi_eff)) above the knee (DESIGN.md, Physics)
            U[saturated] = -self.volume * self.saturation * (
                H[saturated] - self.saturation / (2.0 * MU0 * self.chi_eff))
        return U

    def magnetic_force(self, B, G) -> np.ndarray:
        """-grad U: V chi_eff / mu0 G^T B below the knee, V Js / mu0 G^T B / |B| above it.

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
        F = self.linear_force(B, G)
        if self.saturation is not None:
            GtB = grad_half_B2(B, G)
            size = np.linalg.norm(np.asarray(B, float).reshape(-1, 3), axis=1)
            unit_GtB = np.divide(GtB, size[:, None], out=np.zeros_like(GtB),
                                 where=size[:, None] > 0)
            saturated = size / MU0 > self.saturation_H
            F[saturated] = self.volume * self.saturation / MU0 * unit_GtB[saturated]
        return F

    def finite_model(self, field_model, positions=None):
        """The exact linear sphere, or the volume average when the field passes the knee.

        The volume average is chosen when the field on the surface of a probe at any of the
        positions is past the knee (the exact sphere is linear only).

        Parameters
        ----------
        field_model : trapscape.physics.field.model.FieldModel
        positions : array_like, optional
            (N, 3) equilibria of the point model, m.

        Returns
        -------
        trapscape.physics.probe.finite.MultipoleProbe or AveragedProbe
        """
        exact = MultipoleProbe(field_model, self)
        if self.saturation is None or positions is None or len(positions) == 0:
            return exact
        centres = np.asarray(positions, float).reshape(-1, 3)
        directions = exact.scan_model().directions
        samples = (centres[:, None, :] + exact.radius * directions[None]).reshape(-1, 3)
        if np.max(np.linalg.norm(field_model.applied_H(samples), axis=1)) > self.saturation_H:
            return AveragedProbe(field_model, self)
        return exact
