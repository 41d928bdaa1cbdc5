"""kind = "weak": a weakly magnetic sphere, U = -V chi_eff B^2 / (2 mu0) (DESIGN.md, Physics).

With chi < 0 (a diamagnet: graphite, water, bismuth) the energy rises with B^2, so a minimum of
the field can hold it in every direction: the one kind Earnshaw-Braunbek does not rule out. Under
gravity it floats where d(B^2/2)/dz = -mu0 rho g / |chi_eff| (Berry & Geim, Eur. J. Phys. 18,
307 (1997)).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trapscape.physics.probe.kinds.induced import InducedLaw
from trapscape.physics.probe.registry import register
from trapscape.scene.units import MU0


def levitation_threshold(density: float, chi_eff: float, g: float = 9.81) -> float:
    """|d(B^2/2)/dz| = mu0 rho g / |chi_eff| that a diamagnet needs to float.

    Parameters
    ----------
    density : float
        kg/m^3.
    chi_eff : float
        The sphere's effective susceptibility (dimensionless, nonzero).
    g : float
        m/s^2.

    Returns
    -------
    float
        T^2/m.

    References
    ----------
    Berry & Geim, Eur. J. Phys. 18, 307 (1997); Simon & Geim, J. Appl. Phys. 87, 6200 (2000).
    """
    return MU0 * density * g / abs(chi_eff)


@register
@dataclass(frozen=True, eq=False)
class WeakLaw(InducedLaw):
    """A linear sphere of small |chi|, diamagnetic (chi < 0) or paramagnetic.

    References
    ----------
    DESIGN.md, Physics definitions (weak); Berry & Geim, Eur. J. Phys. 18, 307 (1997); Simon &
    Geim, J. Appl. Phys. 87, 6200 (2000).
    """

    kind = "weak"
    weakly_magnetic = True

    @property
    def diamagnetic(self) -> bool:
        return self.chi_eff < 0

    @property
    def stable_in_free_space(self) -> bool:
        """True for a diamagnet: its energy grows with B^2, and a minimum of |B| holds it in
        every direction (Berry & Geim 1997); false for a paramagnet (Earnshaw-Braunbek)."""
        return self.diamagnetic

    @property
    def caught_at_contact(self) -> bool:
        """False for a diamagnet: U = V |chi_eff| B^2 / (2 mu0) rises towards a part, which
        pushes it back (Berry & Geim 1997); a paramagnet is pulled on like steel."""
        return not self.diamagnetic

    def levitation_threshold(self) -> float:
        """|d(B^2/2)/dz| = mu0 rho |g| / |chi_eff| a diamagnet needs to float, T^2/m.

        Returns
        -------
        float
            T^2/m; inf without susceptibility.

        References
        ----------
        Berry & Geim, Eur. J. Phys. 18, 307 (1997); Simon & Geim, J. Appl. Phys. 87, 6200 (2000).
        """
        if self.chi_eff == 0.0:
            return np.inf
        return levitation_threshold(self.density, self.chi_eff, np.linalg.norm(self.gravity))

    @property
    def earnshaw_label(self) -> str:
        return "diamagnetic weak" if self.diamagnetic else "paramagnetic weak"

    @property
    def noun(self) -> str:
        return "diamagnetic probe" if self.diamagnetic else "weakly magnetic probe"
