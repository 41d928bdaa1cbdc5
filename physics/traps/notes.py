"""The sentences a trap report carries: why nothing is fully stable (Earnshaw-Braunbek), why a
diamagnet does not float, the handling caution, the finite-probe summary and the contact-start
limit."""
from __future__ import annotations

EARNSHAW_NOTE = (
    "Earnshaw-Braunbek: a {kind} probe has no fully stable free equilibrium outside the magnets "
    "(its energy is -|B|^2 or -|B| times a positive factor, and |B| is subharmonic where no "
    "magnet is, so the Hessian always has a direction that falls; gravity and saturation do not "
    "change that). Listed instead: the saddles and unstable points found, and the contact "
    "points where the probe rests pressed against a magnet or plate.")
NO_LEVITATION_NOTE = (
    "No stable levitation point for this diamagnetic probe in the search box: the field's "
    "minimum does not hold it in all three directions (with gravity: d(B^2/2)/dz = "
    "-mu0 rho g / |chi_eff| = {threshold:.3g} T^2/m is needed where it floats; Berry & Geim "
    "1997).")
CAUTION = (
    "Figures are from an idealised model (rigid magnets, a spherical probe); before handling "
    "strong magnets mind pinching and chipping, keep them from children (swallowed magnets), "
    "away from implanted medical devices, and defer to the supplier's data and local codes.")
RIGID_MAGNET_NOTE = ("A rigid, uniformly magnetised sphere feels the mean of B over its volume, "
                     "which equals B at its centre (B is harmonic there).")


def earnshaw_note(problem, equilibria) -> str | None:
    """Why no free equilibrium is fully stable, or None when that needs no saying.

    Free constraint only: soft, magnet and paramagnetic weak probes always get the
    Earnshaw-Braunbek note (DESIGN.md, Physics); a diamagnet gets the levitation threshold when
    none of its free equilibria is stable.

    Parameters
    ----------
    problem : TrapProblem
    equilibria : sequence of Equilibrium

    Returns
    -------
    str or None
    """
    if problem.constraint_kind != "free":
        return None
    law = problem.law
    if not law.stable_in_free_space:
        return EARNSHAW_NOTE.format(kind=law.earnshaw_label)
    if any(e.classification == "stable" and e.contact is None for e in equilibria):
        return None
    threshold = law.levitation_threshold()
    return NO_LEVITATION_NOTE.format(threshold=threshold)


def finite_probe_note(description: str, used: bool, largest: float, threshold: float) -> str:
    """The finite-probe summary's sentence.

    Parameters
    ----------
    description : str
        The finite model's description.
    used : bool
        The equilibria were re-solved with it.
    largest, threshold : float
        The largest relative correction and the threshold (dimensionless).

    Returns
    -------
    str
    """
    if used:
        return (f"Equilibria re-solved with the probe's finite size ({description}); the "
                "scan grid, wells and escape paths use the point model.")
    return (f"Point model kept: the finite size changes the energy by at most {largest:.2g} "
            f"(threshold {threshold:g}).")


def contact_limit_note(limit: int) -> str:
    """Said when only the `limit` lowest cells next to a surface were followed.

    Parameters
    ----------
    limit : int

    Returns
    -------
    str
    """
    return (f"Only the {limit} lowest grid cells next to a surface were followed to contact "
            "points; a finer or smaller search box finds more.")
