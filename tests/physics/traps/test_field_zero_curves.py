"""Arc rotor (issue 13): the magnet probe's "unstable" equilibria at |B| = 0 in the air
(equilibria 59-70 before, at asymmetric places such as (6.581, -3.8, -9.487) mm) were points of
curves of B = 0 on the rotor's planes between poles, where gravity pulls along the curve. There
-m|B| + U_g is not stationary (along the curve only gravity acts), so they are no equilibria."""
from __future__ import annotations

import numpy as np
from repo_paths import SAMPLES

from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.traps.candidates import local_minima
from trapscape.physics.traps.problem import TrapProblem
from trapscape.physics.traps.refine import field_zero_equilibria, field_zeros
from trapscape.physics.traps.scan import scan


def test_no_field_zero_on_a_curve_of_zeros_is_an_equilibrium():
    analysis = load_analysis(str(SAMPLES / "arc_rotor.toml"), [])
    problem = TrapProblem.from_scene(analysis.model, analysis.scene)
    grid = scan(problem, None)
    # the zeros the search starts from, found as before (Gauss-Newton from the grid's minima)
    cells = local_minima(np.linalg.norm(grid.B_T, axis=1), grid.admissible, grid.shape)
    points, zero = field_zeros(problem, grid.points[cells])
    points = points[zero]
    assert len(points) >= 12
    weight = problem.law.gravity_force()
    for x in points:
        # independent of the code's test: the singular values of dB/dx show a curve of zeros
        # (one vanishes against the others) and the weight has a part along that curve
        _, G = problem.point_model.applied_field(x[None])
        _, s, vt = np.linalg.svd(G[0])
        assert s[2] < 1e-3 * s[0]
        assert abs(weight @ vt[2]) > 0.1 * np.linalg.norm(weight)
    assert field_zero_equilibria(problem, grid) == []
