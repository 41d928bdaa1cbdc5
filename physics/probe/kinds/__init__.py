"""The built-in probe kinds; importing this package registers each one (physics.probe.registry),
in the order the scene declares them (scene.probe_kinds)."""
from trapscape.physics.probe.kinds import soft, magnet, weak  # noqa: F401  (importing registers)
