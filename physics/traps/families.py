"""Duplicates and families: near-coincident points dropped, and marginal equilibria of equal
energy next to each other (a circle of equilibria in an axisymmetric scene) kept as one entry."""
from __future__ import annotations

from dataclasses import replace

import numpy as np
from scipy.spatial import cKDTree


def unique_points(points, distance: float) -> np.ndarray:
    """Points with later near-duplicates dropped, in a fixed (lexicographic) order.

    Parameters
    ----------
    points : ndarray, shape (N, 3)
        m.
    distance : float
        m; points closer than this to a kept one are dropped.

    Returns
    -------
    ndarray, shape (M, 3)
        m, sorted by x, then y, then z.
    """
    points = np.asarray(points, float).reshape(-1, 3)
    if len(points) == 0:
        return points
    order = np.lexsort(points.T[::-1])
    points = points[order]
    tree = cKDTree(points)
    keep = np.ones(len(points), bool)
    for i in range(len(points)):
        if keep[i]:
            for j in tree.query_ball_point(points[i], distance):
                if j > i:
                    keep[j] = False
    return points[keep]


def drop_repeats(equilibria, distance: float) -> list:
    """The equilibria without those closer than `distance` to an earlier one.

    Parameters
    ----------
    equilibria : sequence of Equilibrium
    distance : float
        m.

    Returns
    -------
    list of Equilibrium
        In the input order.
    """
    kept = []
    for eq in equilibria:
        if all(np.linalg.norm(eq.position - other.position) > distance for other in kept):
            kept.append(eq)
    return kept


def is_field_zero(eq) -> bool:
    """A magnet probe's equilibrium at B = 0, whose stiffnesses are undefined (None).

    Parameters
    ----------
    eq : Equilibrium
        An equilibrium of the report (physics.traps.report).

    Returns
    -------
    bool
    """
    return bool(eq.stiffness_N_per_m) and eq.stiffness_N_per_m[0] is None


def merge_families(equilibria, spacing: float) -> list:
    """Marginal equilibria (and field zeros) close in place and energy become one entry.

    Those of one kind within 2.5 grid steps of each other and of energies equal to 1e-6
    relative become one entry with family_size.

    Parameters
    ----------
    equilibria : list of Equilibrium
    spacing : float
        Grid step, m.

    Returns
    -------
    list of Equilibrium
        In the input order; each family is represented by its lexicographically first member.
    """
    marginal = [i for i, e in enumerate(equilibria)
                if e.classification == "marginal" or is_field_zero(e)]
    if len(marginal) < 2:
        return equilibria
    parent = {i: i for i in marginal}

    def root(i):
        while parent[i] != i:
            i = parent[i]
        return i

    positions = np.array([equilibria[i].position for i in marginal])
    tree = cKDTree(positions)
    for a, b in sorted(tree.query_pairs(2.5 * spacing)):
        ea, eb = equilibria[marginal[a]], equilibria[marginal[b]]
        scale = max(abs(ea.energy_J), abs(eb.energy_J), 1e-300)
        same_kind = ((ea.contact is None) == (eb.contact is None)
                     and is_field_zero(ea) == is_field_zero(eb))
        if same_kind and abs(ea.energy_J - eb.energy_J) <= 1e-6 * scale:
            parent[root(marginal[a])] = root(marginal[b])
    groups = {}
    for i in marginal:
        groups.setdefault(root(i), []).append(i)
    drop = set()
    result = list(equilibria)
    for members in groups.values():
        members.sort(key=lambda i: tuple(equilibria[i].position))
        first = members[0]
        note = (f"one of {len(members)} neighbouring equilibria of equal energy (a curve or "
                "sheet of equilibria along its marginal directions)")
        old = equilibria[first].note
        result[first] = replace(equilibria[first], family_size=len(members),
                                note=f"{old}; {note}" if old else note)
        drop.update(members[1:])
    return [e for i, e in enumerate(result) if i not in drop]
