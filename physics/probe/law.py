"""What every probe law has: the sphere's size and weight, and the questions physics asks a kind.

A probe kind is one subclass of ProbeLaw (physics/probe/kinds/) registered by its name
(physics/probe/registry.py). The subclass gives the magnetic energy and force from the applied
B and its gradient at a point; this base class adds gravity and answers, with defaults a kind
overrides, what the trap search and the views would otherwise learn by testing the kind's name.

Points are (N, 3) in m; B in T, G[n, i, j] = dB_i/dx_j in T/m; energies in J, forces in N.
"""
from __future__ import annotations

from abc import ABC, abstractmethod
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from trapscape.physics.probe.finite import AveragedProbe
from trapscape.physics.probe.registry import law_class


@dataclass(frozen=True, eq=False)
class ProbeLaw(ABC):
    """The probe's material law and mass: energy and force from B and G at a point.

    Construct a law with ``ProbeLaw.from_scene(scene)`` (the kind is looked up in the
    registry) or a kind's ``from_probe(probe, gravity)``.

    Parameters
    ----------
    diameter : float
        Sphere diameter d, m.
    volume : float
        V = pi d^3 / 6, m^3.
    mass : float
        m_p = density V, kg.
    density : float
        kg/m^3.
    gravity : numpy.ndarray
        (3,) gravitational acceleration, m/s^2.

    References
    ----------
    DESIGN.md, Physics definitions (probe volume, mass and gravity energy).
    """

    kind: ClassVar[str] = ""  # the registry's key, the scene's [probe] kind

    diameter: float
    volume: float
    mass: float
    density: float
    gravity: np.ndarray

    # What the trap search and the views ask instead of testing the kind's name; a kind
    # overrides what differs from these defaults.
    saturates: ClassVar[bool] = False  # its magnetisation has a ceiling (Js)
    cone_at_field_zero: ClassVar[bool] = False  # U ~ -|B|: equilibria at B = 0 Newton cannot see
    point_model_is_exact: ClassVar[bool] = False  # no finite-size correction exists
    weakly_magnetic: ClassVar[bool] = False  # magnetic force comparable to the weight (hover sheet)
    linear_susceptibility: ClassVar[float | None] = None  # SI chi while linear; None: not induced

    @classmethod
    def from_scene(cls, scene) -> "ProbeLaw":
        """The law of the scene's probe, of the class registered for its kind.

        Parameters
        ----------
        scene : trapscape.scene.model.Scene
            Supplies ``scene.probe`` and ``scene.gravity`` (m/s^2).

        Returns
        -------
        ProbeLaw
            An instance of the kind's registered subclass.
        """
        return law_class(scene.probe.kind).from_probe(scene.probe, scene.gravity)

    @classmethod
    def from_probe(cls, probe, gravity) -> "ProbeLaw":
        """The law of one probe (a kind's subclass reads its own fields of ``probe``).

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            The validated probe, SI units.
        gravity : array_like
            (3,) m/s^2.

        Returns
        -------
        ProbeLaw
        """
        return cls(**cls.sphere_values(probe, gravity))

    @staticmethod
    def sphere_values(probe, gravity) -> dict:
        """The fields every law has, from a probe: diameter, volume, mass, density, gravity.

        Parameters
        ----------
        probe : trapscape.scene.model.Probe
            The validated probe, SI units.
        gravity : array_like, shape (3,)
            Gravitational acceleration, m/s^2.

        Returns
        -------
        dict
            diameter (m), volume (m^3), mass (kg), density (kg/m^3), gravity ((3,) m/s^2).
        """
        return dict(diameter=float(probe.diameter), volume=probe.volume, mass=probe.mass,
                    density=float(probe.density), gravity=np.asarray(gravity, float))

    # -- the kind's physics -------------------------------------------------------------------

    @abstractmethod
    def magnetic_energy(self, B) -> np.ndarray:
        """Magnetic energy of the probe with its centre where the applied field is B.

        Parameters
        ----------
        B : array_like
            (N, 3) applied flux density, T.

        Returns
        -------
        numpy.ndarray
            (N,) energy, J.
        """

    @abstractmethod
    def magnetic_force(self, B, G) -> np.ndarray:
        """-grad U of the magnetic energy.

        Parameters
        ----------
        B : array_like
            (N, 3) applied flux density, T.
        G : array_like
            (N, 3, 3) its gradient, G[n, i, j] = dB_i/dx_j, T/m.

        Returns
        -------
        numpy.ndarray
            (N, 3) force, N.
        """

    def volume_averaged(self, B, G, weights):
        """Energy and force averaged over the probe's volume from field samples in it.

        This default averages the energy density (the local approximation, right for any law
        whose energy is an integral of a density over the body); a rigid magnet overrides it.

        Parameters
        ----------
        B : array_like
            (N, Q, 3) applied B at the Q quadrature points of each of N probes, T.
        G : array_like
            (N, Q, 3, 3) its gradient, T/m.
        weights : array_like
            (Q,) quadrature weights summing to 1.

        Returns
        -------
        U : numpy.ndarray
            (N,) J.
        F : numpy.ndarray
            (N, 3) N.
        """
        B = np.asarray(B, float)
        n, q = B.shape[:2]
        G = np.asarray(G, float).reshape(-1, 3, 3)
        U = self.magnetic_energy(B.reshape(-1, 3)).reshape(n, q) @ weights
        F = np.einsum("nqi,q->ni", self.magnetic_force(B.reshape(-1, 3), G).reshape(n, q, 3),
                      weights)
        return U, F

    def finite_model(self, field_model, positions=None):
        """The probe model that accounts for its size, or None when the point model is exact.

        Parameters
        ----------
        field_model : trapscape.physics.field.model.FieldModel
        positions : array_like, optional
            (N, 3) equilibria found with the point model, m; a kind may look at the field
            there to choose (a soft probe: saturated on its surface or not).

        Returns
        -------
        trapscape.physics.probe.models.ProbeModel or None
            This default: the volume average (physics.probe.finite.AveragedProbe).
        """
        return AveragedProbe(field_model, self)

    # -- what the trap search and the views say about it ----------------------------------------

    @property
    def stable_in_free_space(self) -> bool:
        """Whether a fully stable free equilibrium can exist outside the magnets.

        False for energies that fall with |B| (Earnshaw-Braunbek: |B| is subharmonic where no
        magnet is); a diamagnet overrides it.

        References
        ----------
        DESIGN.md, Physics definitions (Earnshaw-Braunbek).
        """
        return False

    @property
    def caught_at_contact(self) -> bool:
        """Whether a magnet or plate the probe touches holds it (it is attracted there).

        True here: the energy of an induced or permanent moment falls with the field, so a probe
        that reaches a part is pulled onto it, and touching it ends an escape. A diamagnet
        overrides it: it is pushed back, and a part is a wall for it.

        Returns
        -------
        bool

        References
        ----------
        DESIGN.md, Physics definitions (the energies of the probe kinds).
        """
        return True

    @property
    def earnshaw_label(self) -> str:
        """The kind's word in the sentence saying why nothing is fully stable free."""
        return self.kind

    @property
    def noun(self) -> str:
        """What a picture's title calls the probe ("soft-iron bead")."""
        return f"{self.kind} probe"

    @property
    def subject(self) -> str:
        """How a summary sentence starts about it ("The steel probe")."""
        return "The probe"

    # -- gravity ------------------------------------------------------------------------------

    def gravity_energy(self, points) -> np.ndarray:
        """U_g = -m_p g . x.

        Parameters
        ----------
        points : array_like
            (N, 3) probe centres, m.

        Returns
        -------
        numpy.ndarray
            (N,) J.

        References
        ----------
        DESIGN.md, Physics definitions (gravity).
        """
        return -self.mass * (np.asarray(points, float).reshape(-1, 3) @ self.gravity)

    def gravity_force(self) -> np.ndarray:
        """The weight m_p g, (3,) N, the same at every point."""
        return self.mass * self.gravity
