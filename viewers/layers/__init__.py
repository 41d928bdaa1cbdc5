"""The layers of a scene view, one module each: `draw(plotter, ctx, legend, ...)` adds them to a
picture and `meshes(ctx) -> {name: pyvista mesh}` hands their geometry to the exports."""
from __future__ import annotations

import importlib

from trapscape.scene.errors import SceneError
from trapscape.scene.names import did_you_mean, listing

LAYERS = {  # drawing order
    "magnets": "the magnets: north faces dark lettered N, south faces light lettered S, arrow = M",
    "plates": "steel plates",
    "section": "|B| in mT on a section plane through the traps, with its field lines",
    "fieldlines": "3D field lines seeded around the magnets",
    "isosurfaces": "the probe-energy surface bounding each stable trap's catchment (with --iso: "
                   "surfaces of equal energy density B^2/2mu0 at those |B|)",
    "forces": "the force on the probe on a lattice of points",
    "guide": "the guide line or plane the probe is held to",
    "wells": "the capture regions of the stable traps",
    "hover": "where the force along parallel guide lines balances gravity and restores",
    "markers": "equilibria: sphere stable, diamond saddle, ring unstable, cube marginal",
    "implant": "the implant shell: outside it |B| is below the implant limit (0.5 mT)",
}
BASE_DEFAULTS = ("magnets", "plates", "section", "guide", "wells", "markers")


def default_layers(scene) -> tuple:
    """What a customer reads at a glance; for a free diamagnetic probe under gravity the hover
    sheet is where it floats, and the surfaces bounding its wells where it is caught, so they
    are part of the default picture too."""
    chosen = set(BASE_DEFAULTS)
    from trapscape.physics.analysis.views import probe_words  # lazy: the parser starts fast

    constraint = scene.constraint
    gravity = float((scene.gravity**2).sum()) > 0
    floats = probe_words(scene).hovers
    if floats and constraint.kind == "free" and gravity:
        chosen.add("hover")
    if constraint.kind == "free":
        chosen.discard("guide")
    if floats and constraint.kind == "free":
        # a probe that can float free has wells in open space: the energy surface bounding each
        # well's catchment shows them smoothly (a probe that can only be caught against a
        # magnet keeps the wells layer)
        chosen.add("isosurfaces")
        chosen.discard("wells")
    return tuple(name for name in LAYERS if name in chosen)


def parse_layers(spec: str | None, scene) -> tuple:
    """--layers: '+fieldlines,+hover,-section' changes the defaults; 'magnets,markers' (names
    without a sign) starts from nothing; 'all' and 'default' are words too."""
    if not spec:
        return default_layers(scene)
    items = [item.strip() for item in spec.split(",") if item.strip()]
    signed = all(item[0] in "+-" for item in items)
    chosen = set(default_layers(scene)) if signed else set()
    for item in items:
        sign, name = (item[0], item[1:].strip()) if item[0] in "+-" else ("+", item)
        names = _expand(name.lower(), scene)
        chosen = chosen | names if sign == "+" else chosen - names
    if not chosen:
        raise SceneError(f"--layers {spec!r} leaves nothing to draw; keep at least one layer, "
                         "e.g. --layers magnets.")
    return tuple(name for name in LAYERS if name in chosen)


def _expand(name: str, scene) -> set:
    if name == "all":
        return set(LAYERS)
    if name in ("default", "defaults"):
        return set(default_layers(scene))
    if name not in LAYERS:
        raise SceneError(f"--layers: unknown layer {name!r}{did_you_mean(name, LAYERS)}; "
                         f"choose from {listing(list(LAYERS) + ['all', 'default'])}.")
    return {name}


def layer_module(name: str):
    return importlib.import_module(f"trapscape.viewers.layers.{name}")


def describe_layers() -> str:
    return "; ".join(f"{name}: {text}" for name, text in LAYERS.items())
