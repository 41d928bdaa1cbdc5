"""The built-in probe kinds; importing this package registers each one (physics.probe.registry),
in the order the scene declares them (scene.probe_kinds)."""
from trapscape.physics.probe.kinds import soft  # noqa: F401  (registers it)
from trapscape.physics.probe.kinds import magnet  # noqa: F401  (registers it)  # isort: skip
from trapscape.physics.probe.kinds import weak  # noqa: F401  (registers it)
