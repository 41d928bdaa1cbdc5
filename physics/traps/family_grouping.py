"""Families of equilibria: one answer reported once. Two equilibria of one class (both free, or
both resting on a surface) are one family when an operation of the scene's symmetry maps one
onto the other, when both lie on one circle about an axis every rotation about which is a
symmetry (a contact ring), or when both rest on the same part within a few grid steps at one
energy (neighbouring points of one flat contact curve, which the search's resolution cannot
tell apart). Every member stays in the report; each says its family."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.traps.families import is_field_zero
from trapscape.physics.traps.report import Family, Circle

POSITION_TOLERANCE = 0.05  # grid steps: an image lands on a member (the contact search's precision)
CURVE_REACH = 2.5  # grid steps: neighbouring points of one contact curve
CURVE_ENERGY = 1e-5  # relative energy difference of neighbouring points of one contact curve
TIE = 1e-7  # relative: escape forces this close are one value (images of one trap, equal to
# rounding and the solver's last digits); the first member of those is the representative


def _same_kind(a, b) -> bool:
    return (a.classification == b.classification and (a.contact is None) == (b.contact is None)
            and is_field_zero(a) == is_field_zero(b))


def _symmetry_link(symmetry, a, b, tolerance: float) -> str | None:
    """'circle' or 'symmetric set' when the symmetry maps a onto b, else None."""
    images = symmetry.images(a.position)
    if symmetry.continuous:
        rho_b, h_b = symmetry.circle_coordinates(b.position)
        for image in images:
            rho, h = symmetry.circle_coordinates(image)
            if abs(rho - rho_b) <= tolerance and abs(h - h_b) <= tolerance:
                return "circle" if rho_b > tolerance else "symmetric set"
        return None
    if len(images) > 1 and np.min(np.linalg.norm(images - b.position, axis=1)) <= tolerance:
        return "symmetric set"
    return None


def _curve_link(a, b, spacing: float) -> bool:
    """Both rest on one part, close, at one energy: points of one flat contact curve."""
    if a.contact is None or b.contact is None or a.contact.surface != b.contact.surface:
        return False
    if np.linalg.norm(a.position - b.position) > CURVE_REACH * spacing:
        return False
    scale = max(abs(a.energy_J), abs(b.energy_J), 1e-300)
    return abs(a.energy_J - b.energy_J) <= CURVE_ENERGY * scale


def trap_families(equilibria, symmetry, spacing: float) -> tuple:
    """The equilibria with their family numbers, and the families.

    Parameters
    ----------
    equilibria : list of Equilibrium
        In the report's order.
    symmetry : physics.traps.symmetry.Symmetry
        The scene's symmetry (scene_symmetry).
    spacing : float
        Grid step, m.

    Returns
    -------
    equilibria : list of Equilibrium
        The same equilibria (physics untouched), each with its family number.
    families : list of Family
        Numbered from 1 in the order of their first members.

    References
    ----------
    Derived here (union-find over the links named in the module's docstring).
    """
    n = len(equilibria)
    parent = list(range(n))

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    link_kinds = {}
    tolerance = POSITION_TOLERANCE * spacing
    for i in range(n):
        for j in range(i + 1, n):
            a, b = equilibria[i], equilibria[j]
            if not _same_kind(a, b):
                continue
            kind = _symmetry_link(symmetry, a, b, tolerance)
            if kind is None and _curve_link(a, b, spacing):
                kind = "contact curve"
            if kind is not None:
                ri, rj = root(i), root(j)
                kinds = link_kinds.pop(ri, set()) | link_kinds.pop(rj, set()) | {kind}
                parent[max(ri, rj)] = min(ri, rj)
                link_kinds[min(ri, rj)] = kinds
    groups = {}
    for i in range(n):
        groups.setdefault(root(i), []).append(i)
    families, numbered = [], list(equilibria)
    for number, (top, members) in enumerate(sorted(groups.items(), key=lambda g: g[1][0]), 1):
        families.append(_family(number, members, equilibria, link_kinds.get(top, set()),
                                symmetry, tolerance))
        for i in members:
            numbered[i] = replace(equilibria[i], family=number)
    return numbered, families


def firmest(forces) -> int:
    """The first index whose escape force is the largest within TIE (ties among images of one
    trap differ only by rounding, which must not choose).

    Parameters
    ----------
    forces : sequence of (float, int)
        Escape forces (N) and their indices.

    Returns
    -------
    int
    """
    top = max(force for force, _ in forces)
    return min(i for force, i in forces if force >= top - TIE * abs(top))


def _family(number, members, equilibria, kinds, symmetry, tolerance) -> Family:
    records = [equilibria[i] for i in members]
    forces = [(e.escape.force_N, i) for e, i in zip(records, members)
              if e.escape is not None and e.escape.force_N is not None
              and np.isfinite(e.escape.force_N)]
    representative = firmest(forces) if forces else members[0]
    kind = ("single" if len(members) == 1 else "circle" if "circle" in kinds
            else "contact curve" if "contact curve" in kinds else "symmetric set")
    circle = None
    if kind == "circle":
        rho, height = symmetry.circle_coordinates(equilibria[representative].position)
        circle = Circle(radius_m=rho, centre=symmetry.centre + height * symmetry.axis,
                    axis=np.asarray(symmetry.axis, float))
    energies = [e.energy_J for e in records]
    return Family(
        number=number, classification=records[0].classification, members=tuple(members),
        representative=representative, kind=kind, circle=circle,
        escape_force_N=(min(f for f, _ in forces), max(f for f, _ in forces)) if forces else None,
        energy_J=(min(energies), max(energies)),
        surfaces=tuple(sorted({e.contact.surface for e in records if e.contact is not None})),
        by_symmetry=bool(kinds & {"circle", "symmetric set"}))
