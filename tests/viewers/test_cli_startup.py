"""The command line answers --help, --version and usage errors before the engine loads: building
the parser imports no numba, scipy or drawing library (each costs tenths of a second)."""
from __future__ import annotations

import subprocess
import sys

HEAVY = ("numba", "scipy", "pyvista", "vtk", "matplotlib", "trimesh")


def test_building_the_parser_loads_no_engine():
    code = ("import sys\nfrom trapscape.viewers.cli import build_parser\nbuild_parser()\n"
            f"print(','.join(m for m in {HEAVY!r} if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "", f"the parser imported {done.stdout.strip()}"
