"""The induced response of a sphere: the effective susceptibility chi_eff of a permeable ball."""
from __future__ import annotations


def effective_susceptibility(chi: float) -> float:
    """The induced magnetisation of a sphere per unit applied field.

    chi_eff = 3 chi / (3 + chi), from M = 3 (mu - mu0) / (mu + 2 mu0) H0 with mu = mu0 (1 + chi)
    (Clausius-Mossotti).

    Parameters
    ----------
    chi : float
        SI volume susceptibility of the material (dimensionless), above -1.

    Returns
    -------
    float
        chi_eff (dimensionless): M = chi_eff H0 for a sphere in the uniform applied H0.

    References
    ----------
    J. D. Jackson, Classical Electrodynamics, 3rd ed., section 5.11.
    """
    return 3.0 * chi / (3.0 + chi)
