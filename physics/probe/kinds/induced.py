"""What soft and weak probes share: a moment induced by the applied field, M = chi_eff H.

U = -V chi_eff B^2 / (2 mu0) and F = V chi_eff / mu0 G^T B while the response is linear
(DESIGN.md, Physics; grad (B.B)/2 = G^T B, derived here).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.probe.finite import MultipoleProbe
from trapscape.physics.probe.law import ProbeLaw
from trapscape.physics.probe.susceptibility import effective_susceptibility
from trapscape.scene.units import MU0


@dataclass(frozen=True, eq=False)
class InducedLaw(ProbeLaw):
    """A sphere of SI susceptibility chi in the applied field, linear response.

    Parameters
    ----------
    susceptibility : float
        SI volume chi (dimensionless), above -1.
    chi_eff : float
        3 chi / (3 + chi), the sphere's induced M per applied H (Jackson 5.11).

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (sphere in a uniform field).
    """

    susceptibility: float
    chi_eff: float

    @classmethod
    def from_probe(cls, probe, gravity) -> "InducedLaw":
        """The law of an induced probe: the sphere's values and its susceptibilities.

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            The validated probe, SI units.
        gravity : array_like, shape (3,)
            Gravitational acceleration, m/s^2.

        Returns
        -------
        InducedLaw
        """
        return cls(**cls.sphere_values(probe, gravity), **cls.induced_values(probe))

    @staticmethod
    def induced_values(probe) -> dict:
        """susceptibility and chi_eff of a probe.

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            Its susceptibility is the SI volume chi (dimensionless).

        Returns
        -------
        dict
            susceptibility (chi) and chi_eff = 3 chi / (3 + chi) (0 when chi is 0), dimensionless.

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (chi_eff).
        """
        chi = float(probe.susceptibility)
        return dict(susceptibility=chi, chi_eff=effective_susceptibility(chi) if chi else 0.0)

    @property
    def linear_susceptibility(self) -> float:
        """SI chi of the material while its response is linear (the exact-sphere model uses it)."""
        return self.susceptibility

    def induced_magnetization(self, H) -> np.ndarray:
        """M = chi_eff H of the sphere (Jackson 5.11).

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
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11.
        """
        return self.chi_eff * np.asarray(H, float).reshape(-1, 3)

    def linear_energy(self, B) -> np.ndarray:
        """U = -V chi_eff B^2 / (2 mu0) of the linear response (DESIGN.md, Physics).

        Parameters
        ----------
        B : array_like, shape (N, 3)
            Applied flux density, T.

        Returns
        -------
        numpy.ndarray, shape (N,)
            J.

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (chi_eff).
        """
        B = np.asarray(B, float).reshape(-1, 3)
        B2 = np.einsum("ni,ni->n", B, B)
        return -self.volume * self.chi_eff * B2 / (2.0 * MU0)

    def linear_force(self, B, G) -> np.ndarray:
        """F = V chi_eff / mu0 G^T B of the linear response (derived here: grad (B.B)/2 = G^T B).

        Parameters
        ----------
        B : array_like, shape (N, 3)
            Applied flux density, T.
        G : array_like, shape (N, 3, 3)
            Its gradient, G[n, i, j] = dB_i/dx_j, T/m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            N.

        References
        ----------
        Derived here: grad (B.B)/2 = G^T B.
        """
        return self.volume * self.chi_eff / MU0 * grad_half_B2(B, G)

    def magnetic_energy(self, B) -> np.ndarray:
        """-V chi_eff B^2 / (2 mu0) (DESIGN.md, Physics): linear_energy.

        Parameters
        ----------
        B : array_like, shape (N, 3)
            Applied flux density, T.

        Returns
        -------
        numpy.ndarray, shape (N,)
            J.

        References
        ----------
        J. D. Jackson, Classical Electrodynamics, 3rd ed., 5.11 (chi_eff).
        """
        return self.linear_energy(B)

    def magnetic_force(self, B, G) -> np.ndarray:
        """V chi_eff / mu0 G^T B (derived here): linear_force.

        Parameters
        ----------
        B : array_like, shape (N, 3)
            Applied flux density, T.
        G : array_like, shape (N, 3, 3)
            Its gradient, G[n, i, j] = dB_i/dx_j, T/m.

        Returns
        -------
        numpy.ndarray, shape (N, 3)
            N.

        References
        ----------
        Derived here: grad (B.B)/2 = G^T B.
        """
        return self.linear_force(B, G)

    def finite_model(self, field_model, positions=None):
        """The exact linear sphere (physics.probe.finite.MultipoleProbe), whatever the positions.

        Parameters
        ----------
        field_model : trapscape.physics.field.model.FieldModel
            The magnets' field.
        positions : array_like, shape (N, 3), optional
            Equilibria of the point model, m. Not used here.

        Returns
        -------
        trapscape.physics.probe.finite.MultipoleProbe
        """
        return MultipoleProbe(field_model, self)


def grad_half_B2(B, G) -> np.ndarray:
    """grad (B.B)/2 = G^T B (derived here).

    Parameters
    ----------
    B : array_like, shape (N, 3)
        T.
    G : array_like, shape (N, 3, 3)
        G[n, i, j] = dB_i/dx_j, T/m.

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        T^2/m.

    References
    ----------
    Derived here.
    """
    B = np.asarray(B, float).reshape(-1, 3)
    G = np.asarray(G, float).reshape(-1, 3, 3)
    return np.einsum("nij,ni->nj", G, B)
