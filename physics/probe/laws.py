"""The probe in the magnets' field: the names the rest of trapscape imports.

One law class per kind lives in physics/probe/kinds/ behind physics/probe/registry.py;
``ProbeLaw.from_scene(scene)`` builds the scene probe's law. Energies (DESIGN.md, Physics):
- soft:   U = -mu0 V integral_0^|H| M(h) dh with M = chi_eff H capped at Js / mu0;
- magnet: U = -m |B| (free to turn) or -m n.B (fixed north n), m = Br V / mu0;
- weak:   U = -V chi_eff B^2 / (2 mu0);
plus gravity U_g = -m_p g.x, with chi_eff = 3 chi / (3 + chi) (Jackson 5.11).

Points are (N, 3) in m; energies in J, forces in N, Hessians in N/m.
"""
from __future__ import annotations

from trapscape.physics.probe.constraint import (allowed_basis, project_hessian, project_vectors,
                                                projected_force)
from trapscape.physics.probe.law import ProbeLaw
from trapscape.physics.probe.models import HESSIAN_STEP_FRACTION, PointProbe, ProbeModel
from trapscape.physics.probe.registry import kinds, law_class, register
from trapscape.physics.probe.susceptibility import effective_susceptibility

__all__ = ["HESSIAN_STEP_FRACTION", "PointProbe", "ProbeLaw", "ProbeModel", "allowed_basis",
           "effective_susceptibility", "kinds", "law_class", "project_hessian",
           "project_vectors", "projected_force", "register"]
