"""The variants a scene's [sweep] table asks for (for `screen`)::

    [sweep]
    gap = [2, 3, 4]          # a list of values
    bead = "2..4@3"          # START..STOP@COUNT
    mode = "grid"            # every combination (default), or "latin"
    samples = 20             # latin: how many variants
    seed = 1                 # latin: the same seed, the same variants

A Latin hypercube puts one variant in each of `samples` equal slices of every parameter's range
(M. D. McKay, R. J. Beckman, W. J. Conover, Technometrics 21, 239 (1979); scipy.stats.qmc); a
list parameter takes the value of its slice.
"""
from __future__ import annotations

import itertools

import numpy as np

from trapscape.physics.analysis.sweep import MAX_STEPS, parse_vary
from trapscape.scene.errors import SceneError
from trapscape.scene.files import read_limited
from trapscape.scene.tomlfile import parse_toml

MODES = ("grid", "latin")
SETTINGS = ("mode", "samples", "seed")
MAX_SCENE_BYTES = 16 << 20


def scene_variants(scene_path) -> list:
    """The variants of a scene file's own [sweep] table.

    Parameters
    ----------
    scene_path : str or os.PathLike

    Returns
    -------
    list of dict
        {name: value} per variant; [{}] (the scene as it is) when it has no [sweep].
    """
    raw = read_limited(scene_path, MAX_SCENE_BYTES, "scene file", "give the scene's .toml file")
    document = parse_toml(raw, str(scene_path))
    table = document.get("sweep", {})
    if not isinstance(table, dict):
        raise SceneError(f"{scene_path}: [sweep] must be a table.")
    return variants(table, document.get("params", {}), str(scene_path))


def variants(table: dict, params: dict, where: str) -> list:
    """The {name: value} of each variant.

    Parameters
    ----------
    table : dict
        A [sweep] table.
    params : dict
        The scene's [params] (names the table may vary).
    where : str
        The file, for messages.

    Returns
    -------
    list of dict
        [{}] when the table varies nothing.
    """
    where = f"{where}, [sweep]"
    mode = table.get("mode", "grid")
    if mode not in MODES:
        raise SceneError(f"{where}: mode must be grid or latin.")
    axes = {}
    for name, spec in table.items():
        if name in SETTINGS:
            continue
        if name not in params:
            raise SceneError(f"{where}: {name!r} is not in the scene's [params].")
        axes[name] = _values(name, spec, where)
    if not axes:
        return [{}]
    if mode == "grid":
        count = int(np.prod([len(v) for v, _ in axes.values()]))
        if count > MAX_STEPS * 25:
            raise SceneError(f"{where}: the grid has {count} variants; use fewer values or "
                             f"mode = \"latin\".")
        return [dict(zip(axes, combo))
                for combo in itertools.product(*(v for v, _ in axes.values()))]
    return _latin(axes, table, where)


def _values(name, spec, where) -> tuple:
    """(values, continuous): a range is continuous (latin draws anywhere in it), a list not."""
    if isinstance(spec, str):
        return list(parse_vary(f"{name}={spec}").values), True
    if isinstance(spec, list) and spec and all(
            isinstance(v, (int, float)) and not isinstance(v, bool) and np.isfinite(v)
            for v in spec):
        return [float(v) for v in spec], False
    raise SceneError(f"{where}: {name} must be a list of numbers or \"START..STOP@COUNT\".")


def _latin(axes, table, where) -> list:
    samples, seed = table.get("samples"), table.get("seed", 0)
    if not isinstance(samples, int) or not 1 <= samples <= MAX_STEPS * 25:
        raise SceneError(f"{where}: latin needs samples = a whole number from 1 to "
                         f"{MAX_STEPS * 25}.")
    if not isinstance(seed, int):
        raise SceneError(f"{where}: seed must be a whole number.")
    # imported here: scipy.stats is a large share of a screening process's start-up
    from scipy.stats import qmc

    unit = qmc.LatinHypercube(d=len(axes), seed=seed).random(samples)
    result = []
    for row in unit:
        variant = {}
        for u, (name, (values, continuous)) in zip(row, axes.items()):
            if continuous:
                variant[name] = float(values[0] + u * (values[-1] - values[0]))
            else:
                variant[name] = values[min(int(u * len(values)), len(values) - 1)]
        result.append(variant)
    return result
