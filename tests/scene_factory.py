"""Scenes built in code for the probe and trap tests (no TOML, no loader): SI units, unit "m"."""
from __future__ import annotations

import numpy as np

from trapscape.scene.model import Constraint, Magnet, Probe, Scene, SearchBox, SteelPlate, frozen_array


def sphere_magnet(name, position, diameter, north=(0, 0, 1), remanence=1.3) -> Magnet:
    north = np.asarray(north, dtype=float)
    return Magnet(name=name, shape="sphere", dims=(float(diameter),),
                  position=frozen_array(position, (3,)), rotation=frozen_array(np.eye(3)),
                  north=frozen_array(north / np.linalg.norm(north), (3,)), radial=None,
                  remanence=float(remanence))


def cylinder_magnet(name, position, diameter, height, north=(0, 0, 1), remanence=1.3) -> Magnet:
    north = np.asarray(north, dtype=float)
    return Magnet(name=name, shape="cylinder", dims=(float(diameter), float(height)),
                  position=frozen_array(position, (3,)), rotation=frozen_array(np.eye(3)),
                  north=frozen_array(north / np.linalg.norm(north), (3,)), radial=None,
                  remanence=float(remanence))


def soft_probe(diameter=1e-3, susceptibility=1000.0, density=7850.0, saturation=None) -> Probe:
    return Probe(kind="soft", diameter=diameter, density=density, susceptibility=susceptibility,
                 saturation=saturation)


def weak_probe(diameter=1e-3, susceptibility=-4.5e-4, density=2200.0) -> Probe:
    return Probe(kind="weak", diameter=diameter, density=density, susceptibility=susceptibility)


def magnet_probe(diameter=1e-3, remanence=1.3, density=7500.0, orientation=None) -> Probe:
    if orientation is not None:
        orientation = frozen_array(np.asarray(orientation, float) / np.linalg.norm(orientation))
    return Probe(kind="magnet", diameter=diameter, density=density, remanence=remanence,
                 orientation=orientation)


def constraint(kind="free", point=(0, 0, 0), direction=(0, 0, 1)) -> Constraint:
    direction = np.asarray(direction, dtype=float)
    return Constraint(kind=kind, point=frozen_array(point, (3,)),
                      direction=frozen_array(direction / np.linalg.norm(direction), (3,)))


def plate(name, point, normal, thickness=5e-3, saturation=2.0) -> SteelPlate:
    return SteelPlate(name=name, point=frozen_array(point, (3,)),
                      normal=frozen_array(normal, (3,)), thickness=thickness,
                      saturation=saturation)


def make_scene(magnets, probe, box_min, box_max, spacing, constraint_=None, gravity=(0, 0, 0),
               plates=()) -> Scene:
    return Scene(
        title="test", units="m", unit_scale=1.0, gravity=frozen_array(gravity, (3,)),
        magnets=tuple(magnets), plates=tuple(plates), probe=probe,
        constraint=constraint_ or constraint(),
        search_box=SearchBox(min=frozen_array(box_min, (3,)), max=frozen_array(box_max, (3,)),
                             spacing=float(spacing)),
        params={}, path="", digest="test",
    )


def shape_part(shape, dims, position=(0, 0, 0), rotation=None, north=(0, 0, 1), remanence=1.3,
               radial=None) -> Magnet:
    """A placed part of any registered shape (scene.shapes) with the given dims (SI)."""
    north = None if radial else np.asarray(north, dtype=float) / np.linalg.norm(north)
    return Magnet(name=f"{shape}-part", shape=shape, dims=tuple(dims),
                  position=frozen_array(position, (3,)),
                  rotation=frozen_array(np.eye(3) if rotation is None else rotation),
                  north=None if north is None else frozen_array(north, (3,)), radial=radial,
                  remanence=float(remanence))
