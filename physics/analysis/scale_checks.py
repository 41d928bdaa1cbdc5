"""Scale mismatches between the probe, the magnets and the search grid.

A magnet smaller than two steps of the search grid: the scan cannot resolve its field, and traps
at it may be missed; the report says so and names the resolution that resolves it.

A soft probe much larger than the magnet it rests on: the sphere models stop converging there
(the field changes over the magnet's size, far below the probe's radius), so each such contact's
figures are capped by the tangent-plane limit and reported with their uncertainty.

The limit: seen from a magnet much smaller than the probe, the sphere's surface is the plane
tangent to it at the contact; a perfectly permeable half-space behind that plane pulls at least
as hard as the sphere (more permeable material, and the most permeable one), and the force follows
from the magnets' images in the plane (the image method: J. D. Jackson, Classical
Electrodynamics, 3rd ed., 4.4 with the magnetic analogue of a dielectric half-space, mu -> inf).
The pull of the images on the nearby magnets is the Coulombian charge integral of
physics.holding.forces; by Newton's third law, its opposite is the pull on the probe.
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from trapscape.physics.field.model import FieldModel
from trapscape.physics.field.sources import mirrored
from trapscape.physics.holding.forces import force_on_part

# A probe is "large" against a magnet when its radius exceeds the magnet's largest dimension:
# there the sphere's rule checks stop converging at a contact (measured on a cube under a 3 mm
# ball: rule errors above 100 % of the stiffness at edges of 0.5 mm and less).
LARGE_RATIO = 1.0
LARGE_PROBE_WARNING = (
    "Warning: a probe larger than the magnet it rests on. Seen from a small magnet the probe's "
    "surface is a plane, and a perfectly permeable half-space behind it pulls at least as hard "
    "as the sphere, so its contact forces are capped at that limit:")
NEAR_RADII = 4.0  # magnets whose surface is within this many probe radii of the contact act


def plane_limit_force(field_model, contact_point, normal, near) -> np.ndarray:
    """Pull on a perfectly permeable half-space tangent to the probe at its contact, N.

    Parameters
    ----------
    field_model : FieldModel
    contact_point : ndarray, shape (3,)
        m, where the probe touches the magnet.
    normal : ndarray, shape (3,)
        Unit normal of the tangent plane (either sense).
    near : sequence of int
        The magnets whose images and pulls are summed.

    Returns
    -------
    ndarray, shape (3,)
        Force on the half-space (the probe), N: minus the images' pull on the magnets.

    References
    ----------
    Jackson, Classical Electrodynamics, 3rd ed., 4.4 (images in a half-space); Akoun & Yonnet,
    IEEE Trans. Magn. 20, 1962 (1984) (charge integrals of the pull).
    """
    sources = [s for s in field_model.sources if not s.is_image and s.part in near]
    images = [mirrored(s, contact_point, normal, " (image in the probe)") for s in sources]
    with_images = FieldModel(field_model.scene, sources + images)
    pull = sum(force_on_part(with_images, i, images_only=True, rtol=1e-4)[0] for i in near)
    return -np.asarray(pull, float)


def magnet_sizes(field_model) -> np.ndarray:
    """Each magnet's size: the largest of its sources' (their bounding diagonals).

    Parameters
    ----------
    field_model : FieldModel

    Returns
    -------
    ndarray, shape (number of magnets,)
        m.
    """
    sizes = np.zeros(len(field_model.magnets))
    for s in field_model.sources:
        if not s.is_image:
            sizes[s.part] = max(sizes[s.part], s.size)
    return sizes


def capped_contact(field_model, law, eq) -> tuple:
    """The contact with its forces capped by the tangent-plane limit, when the probe is large
    against the magnet it touches.

    Parameters
    ----------
    field_model : FieldModel
    law : ProbeLaw
    eq : Equilibrium

    Returns
    -------
    equilibrium : Equilibrium
        contact.normal_force_N and escape.force_N at most the limit, with a note; eq itself
        when the probe is not large there.
    note : str or None
        The model's figure, the limit and the size ratio.
    """
    chi = law.linear_susceptibility
    if eq.contact is None or chi is None or chi <= 0:
        return eq, None
    radius = law.diameter / 2
    normal = np.asarray(eq.contact.normal, float)
    normal = normal / np.linalg.norm(normal)
    contact_point = np.asarray(eq.position, float) - radius * normal
    distances = field_model.part_distances(contact_point[None])[0]
    touched = int(np.argmin(np.abs(distances)))
    size = magnet_sizes(field_model)[touched]
    if radius <= LARGE_RATIO * size:
        return eq, None
    near = [int(i) for i in np.flatnonzero(distances < NEAR_RADII * radius)]
    pull = plane_limit_force(field_model, contact_point, normal, near)
    weight_into = -float(law.gravity_force() @ normal)
    limit = max(-float(pull @ normal), 0.0) + max(weight_into, 0.0)
    model = eq.contact.normal_force_N
    name = field_model.magnets[touched].name
    note = (f"the probe is {radius / size:.3g} x the size of '{name}' it rests on, where the "
            f"sphere model does not converge: contact force {model:.3g} N by the model, at most "
            f"{limit:.3g} N by the tangent-plane limit (image method); the forces are capped at "
            f"the limit (an upper bound); the stiffness and escape energy there are the model's, "
            f"uncertain by its rule error")
    contact = replace(eq.contact, normal_force_N=min(model, limit))
    escape = eq.escape
    if escape is not None and escape.force_N is not None:
        escape = replace(escape, force_N=min(escape.force_N, limit))
    capped = replace(eq, contact=contact, escape=escape,
                     note="; ".join(n for n in (eq.note, note) if n))
    return capped, note


def with_plane_limits(field_model, law, report):
    """The trap report with every contact of a large probe capped (capped_contact), and a
    warning among its notes.

    Parameters
    ----------
    field_model : FieldModel
    law : ProbeLaw
    report : TrapReport

    Returns
    -------
    TrapReport
    """
    results = [capped_contact(field_model, law, e) for e in report.equilibria]
    lines = list(dict.fromkeys(note for _, note in results if note))
    if not lines:
        return report
    notes = [LARGE_PROBE_WARNING] + [f"  - {line[0].upper()}{line[1:]}." for line in lines]
    return replace(report, equilibria=tuple(e for e, _ in results),
                   notes=tuple(report.notes) + tuple(notes))


def small_magnet_notes(scene, field_model) -> list:
    """Warnings for magnets smaller than two steps of the search grid.

    Parameters
    ----------
    scene : Scene
    field_model : FieldModel

    Returns
    -------
    list of str
        One sentence per such magnet (the three smallest at most), in the scene's unit.
    """
    box = scene.search_box
    spacing = float(box.spacing)
    sizes = magnet_sizes(field_model)
    small = [i for i in np.argsort(sizes) if sizes[i] < 2 * spacing][:3]
    longest = float(np.max(box.max - box.min))
    unit = scene.units
    notes = []
    for i in small:
        needed = int(np.ceil(longest / (sizes[i] / 2))) + 1
        notes.append(
            f"Warning: magnet '{field_model.magnets[i].name}' "
            f"({scene.to_file_units(sizes[i]):.3g} {unit} across) is smaller than two steps of the "
            f"search grid ({scene.to_file_units(spacing):.3g} {unit}), so traps at it may be "
            f"missed: set [search_box] resolution to at least {needed} or shrink the box "
            f"around it.")
    return notes
