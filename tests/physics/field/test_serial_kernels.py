"""Small calls run the field kernels on one thread (dipole_direct, polyhedron): the serial and
the parallel kernel must give the same numbers, bit for bit, at points near and far (so which
one a call takes never changes a result)."""
from __future__ import annotations

import numpy as np

from trapscape.physics.field import dipole_direct, polyhedron
from trapscape.scene.loader import load_scene

SAMPLES = __import__("pathlib").Path(__file__).resolve().parents[3] / "samples"


def _points(rng, n, scale):
    return rng.normal(size=(n, 3)) * scale


def test_dipole_sum_serial_equals_parallel(monkeypatch):
    rng = np.random.default_rng(7)
    positions, moments = rng.uniform(-5e-3, 5e-3, (300, 3)), rng.normal(size=(300, 3))
    targets = np.concatenate([_points(rng, 400, 2e-2), positions[:5] + 1e-6])
    parallel = [dipole_direct.direct_dipole_H(targets, positions, moments, gradient=g)
                for g in (False, True)]
    monkeypatch.setattr(dipole_direct, "PARALLEL_MIN_WORK", 10**12)
    serial = [dipole_direct.direct_dipole_H(targets, positions, moments, gradient=g)
              for g in (False, True)]
    assert np.array_equal(serial[0], parallel[0])
    assert all(np.array_equal(a, b) for a, b in zip(serial[1], parallel[1]))


def test_polyhedron_serial_equals_parallel(monkeypatch):
    rng = np.random.default_rng(8)
    part = load_scene(SAMPLES / "arc_rotor.toml").magnets[0]  # an STL arc segment
    vertices, faces = np.asarray(part.mesh_vertices, float), np.asarray(part.mesh_faces)
    centre = vertices.mean(axis=0)
    # around the part, at its corners and edge midpoints, and inside it
    targets = np.concatenate([centre + _points(rng, 300, 8e-3), vertices,
                              0.5 * (vertices[faces[:, 0]] + vertices[faces[:, 1]]),
                              centre + _points(rng, 20, 1e-4)])
    M = [3e5, -1e5, 8e5]
    monkeypatch.setattr(polyhedron, "PARALLEL_MIN_WORK", 0)
    parallel = polyhedron.polyhedron_H_and_gradient(targets, vertices, faces, M)
    monkeypatch.setattr(polyhedron, "PARALLEL_MIN_WORK", 10**12)
    serial = polyhedron.polyhedron_H_and_gradient(targets, vertices, faces, M)
    assert all(np.array_equal(a, b) for a, b in zip(serial, parallel))
