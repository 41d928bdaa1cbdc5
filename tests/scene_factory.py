"""Scenes built in code for the probe and trap tests (no TOML, no loader): SI units, unit "m"."""
from __future__ import annotations

import numpy as np

from scene.model import Constraint, Magnet, Probe, Scene, SearchBox, SteelPlate, frozen_array


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


def sphere_distances(magnets, points) -> np.ndarray:
    """(N, n) signed distance to each sphere magnet's surface (what physics.geometry gives)."""
    points = np.asarray(points, float).reshape(-1, 3)
    return np.stack([np.linalg.norm(points - m.position, axis=1) - m.dims[0] / 2.0
                     for m in magnets], axis=1)


def cylinder_distance(magnet, points) -> np.ndarray:
    """Signed distance to an upright (unrotated) cylinder magnet's surface (derived here)."""
    body = np.asarray(points, float).reshape(-1, 3) - magnet.position
    diameter, height = magnet.dims
    radial = np.hypot(body[:, 0], body[:, 1]) - diameter / 2.0
    axial = np.abs(body[:, 2]) - height / 2.0
    outside = np.hypot(np.maximum(radial, 0.0), np.maximum(axial, 0.0))
    return outside + np.minimum(np.maximum(radial, axial), 0.0)


def install_sphere_sdf_if_missing(monkeypatch) -> None:
    """Until physics.geometry exists, give the field model the spheres' signed distance."""
    try:
        import physics.geometry  # noqa: F401
        return
    except ImportError:
        pass
    import physics.field

    def part_sdf(magnet, points):
        if magnet.shape == "sphere":
            return sphere_distances([magnet], points)[:, 0]
        if magnet.shape == "cylinder":
            return cylinder_distance(magnet, points)
        raise ImportError("physics.geometry is not there yet: sphere and cylinder magnets only")

    monkeypatch.setattr(physics.field, "part_sdf", part_sdf)
