"""The report's answer first: one plain sentence per trap family, saying where the probe rests
relative to the nearest magnet face and what push dislodges it (each way along a guide line, as
a multiple of its weight). The words come from physics.analysis.trap_words, so they read as
`traps` does."""
from __future__ import annotations

import numpy as np

from trapscape.physics.analysis.display_units import DisplayUnits
from trapscape.physics.analysis.report_profile import LineSamples, Push, push_out, way_words
from trapscape.physics.analysis.trap_words import (EXIT_WORDS, describe_position, multiple,
                                                   probe_weight_N, scene_size)
from trapscape.physics.analysis.views import probe_words
from trapscape.physics.traps.classify import rests
from trapscape.scene.measures import centroid

MOST_ANSWERS = 6  # sentences; the table lists every family


def family_answers(analysis, report, units: DisplayUnits, samples: LineSamples) -> list:
    """One sentence per family where the probe rests (classify.rests), firmest first.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    report : trapscape.physics.traps.search.TrapReport
    units : DisplayUnits
    samples : LineSamples
        The probe along the report's line (the guide line of a line constraint).

    Returns
    -------
    list of str
        Empty when nothing holds the probe (the headline then says so).
    """
    held = [f for f in report.families
            if rests(report.equilibria[f.representative], report.marginal_ratio)]
    held.sort(key=lambda f: -(f.escape_force_N[1] if f.escape_force_N else 0.0))
    sentences = [family_sentence(analysis, report, f, units, samples)
                 for f in held[:MOST_ANSWERS]]
    if len(held) > MOST_ANSWERS:
        sentences.append(f"{len(held) - MOST_ANSWERS} more rest points, held less firmly, are "
                         f"listed in the table of trap families.")
    return sentences


def family_sentence(analysis, report, family, units: DisplayUnits, samples) -> str:
    """Where one family's probe rests and what dislodges it.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    report : trapscape.physics.traps.search.TrapReport
    family : trapscape.physics.traps.report.Family
    units : DisplayUnits
    samples : LineSamples

    Returns
    -------
    str
    """
    scene = analysis.scene
    eq = report.equilibria[family.representative]
    subject = f"{units.L(scene.probe.diameter):.3g} {units.length_label} " \
              f"{probe_words(scene).noun}"
    size = units.L(scene_size(scene) * scene.unit_scale)
    where = describe_position(units.L(np.asarray(eq.position, float)), units.length_label, size)
    count = len(family.members)
    several = f" (and at {count - 1} equivalent point{'s' if count > 2 else ''})" \
        if count > 1 else ""
    path = {"line": " on its guide line", "plane": " on its guide plane"}.get(
        scene.constraint.kind, "")
    text = (f"Trap {family.number}: the {subject} rests{path} at {where}{several}, "
            f"{nearest_face_words(analysis, eq, units)}; ")
    if scene.constraint.kind == "line":
        return text + line_push_words(scene, eq, units, samples) + "."
    return text + escape_words(scene, eq, units) + "."


def nearest_face_words(analysis, eq, units: DisplayUnits) -> str:
    """Where the probe rests relative to the nearest magnet face.

    Parameters
    ----------
    analysis : trapscape.physics.analysis.run.Analysis
    eq : trapscape.physics.traps.report.Equilibrium
    units : DisplayUnits

    Returns
    -------
    str
        E.g. "resting on box face +x of block-2" or "its surface 3 mm from the nearest magnet
        face (part float-block-1), 0.2 mm below its centre".
    """
    scene = analysis.scene
    if eq.contact is not None:
        return f"resting on {eq.contact.surface}"
    point = np.asarray(eq.position, float)[None, :]
    distances = analysis.model.part_distances(point)[0]
    if not len(distances):
        return "with no magnet in the scene"
    index = int(np.argmin(distances))
    magnet = scene.magnets[index]
    gap = units.L(float(distances[index]) - scene.probe.diameter / 2)
    text = (f"its surface {gap:.2g} {units.length_label} from the nearest magnet face "
            f"(part {magnet.name})")
    offset = point[0] - centroid(magnet)
    up = -np.asarray(scene.gravity, float)
    if np.linalg.norm(up) > 0:
        height = float(offset @ up) / np.linalg.norm(up)
        level = units.L(abs(height))
        if level < 0.005 * units.L(scene.probe.diameter):
            text += ", level with its centre"
        else:
            text += (f", {level:.2g} {units.length_label} {'above' if height > 0 else 'below'} "
                     f"its centre")
    return text


def line_push_words(scene, eq, units: DisplayUnits, samples: LineSamples) -> str:
    """'a push of 5 mN (4.61 x its weight) dislodges it down; up, it returns from anywhere in
    the search box (the strongest pull back is 7.3 mN, 6.68 x its weight)'.

    The way it escapes gets the trap search's escape force (the figure of the headline); the
    other way is read off the force along the line (push_out).

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    eq : trapscape.physics.traps.report.Equilibrium
    units : DisplayUnits
    samples : LineSamples
        Along the guide line.

    Returns
    -------
    str
    """
    weight = probe_weight_N(scene)
    start = samples.index_of(eq.position)
    ways = way_words(scene, samples.direction)
    escape_side = _escape_side(eq, samples.direction)
    parts = []
    for step, way in ((1, ways[0]), (-1, ways[1])):
        push = push_out(samples, start, step)
        if step == escape_side and not push.blocked:
            push = Push(float(eq.escape.force_N))
        if push.blocked:
            parts.append(f"{way}, a part or wall stops it")
            continue
        times = f" ({multiple(push.force_N / weight)} x its weight)" if weight > 0 else ""
        force = units.force_text(push.force_N)
        if push.to_edge:
            parts.append(f"{way}, it returns from anywhere in the search box (the strongest "
                         f"pull back is {force}{times.replace(' (', ', ').rstrip(')')})")
        else:
            parts.append(f"a push of {force}{times} dislodges it {way}")
    return "; ".join(parts)


def _escape_side(eq, direction) -> int:
    """+1 or -1: which way along the line the trap search's escape path leaves; 0 unknown."""
    escape = eq.escape
    if escape is None or escape.force_N is None or not np.isfinite(escape.force_N):
        return 0
    if escape.path is None or len(escape.path) < 2:
        return 0
    along = float((np.asarray(escape.path[-1]) - np.asarray(eq.position)) @ direction)
    return int(np.sign(along))


def escape_words(scene, eq, units: DisplayUnits) -> str:
    """What push gets the probe out, the easiest way, from the trap search's escape figures.

    Parameters
    ----------
    scene : trapscape.scene.model.Scene
    eq : trapscape.physics.traps.report.Equilibrium
    units : DisplayUnits

    Returns
    -------
    str
        E.g. "it takes 0.41 N (35 x its weight) to push it out the easiest way, escaping over
        a pass into a neighbouring well".
    """
    escape = eq.escape
    if escape is not None and escape.exit is None:
        return "it cannot get out of its well inside the search box"
    if escape is None or escape.force_N is None or not np.isfinite(escape.force_N):
        return "no escape figure was found"
    weight = probe_weight_N(scene)
    force = units.force_text(escape.force_N)
    times = f" ({multiple(escape.force_N / weight)} x its weight)" if weight > 0 else ""
    exit_words = ""
    if escape.exit_at:
        exit_words = ", escaping " + EXIT_WORDS.get(escape.exit_at, f"to {escape.exit_at}")
    return f"it takes {force}{times} to push it out the easiest way{exit_words}"
