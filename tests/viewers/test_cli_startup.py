"""The command line answers --help, --version and usage errors before the engine loads: building
the parser imports no numba, scipy or drawing library (each costs tenths of a second)."""
from __future__ import annotations

import os
import subprocess
import sys

from repo_paths import SAMPLES

HEAVY = ("numba", "scipy", "pyvista", "vtk", "matplotlib", "trimesh")


def test_building_the_parser_loads_no_engine():
    code = ("import sys\nfrom trapscape.viewers.cli import build_parser\nbuild_parser()\n"
            f"print(','.join(m for m in {HEAVY!r} if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "", f"the parser imported {done.stdout.strip()}"


def test_the_engine_loads_no_scipy_module_it_uses_only_sometimes():
    """scipy.signal (large-kernel convolution), scipy.optimize (peel-angle refinement) and
    scipy.integrate (the Lebedev rule of a finite probe) cost 0.5-0.9 s each at import; a command
    that does not need them must not pay for them."""
    sometimes = ("scipy.signal", "scipy.optimize", "scipy.integrate", "scipy.stats")
    code = ("import sys\nimport trapscape.physics.analysis.run\n"
            f"print(','.join(m for m in {sometimes!r} if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "", f"the engine imported {done.stdout.strip()}"


def test_a_mesh_read_before_loads_no_trimesh(tmp_path):
    """trimesh and the scipy.optimize it imports cost about 0.3 s; a mesh file whose checked
    triangles are in the mesh cache (scene/mesh_cache.py) is not read through it again."""
    code = ("import sys\nfrom trapscape.scene.loader import load_scene\n"
            f"load_scene({str(SAMPLES / 'arc_rotor.toml')!r})\n"
            "print(','.join(m for m in ('trimesh', 'scipy.optimize') if m in sys.modules))")
    env = {**os.environ, "TRAPSCAPE_CACHE": str(tmp_path)}
    first = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                           check=True, env=env)
    assert "trimesh" in first.stdout  # read and checked the first time
    again = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                           check=True, env=env)
    assert again.stdout.strip() == "", f"loading the scene again imported {again.stdout.strip()}"
