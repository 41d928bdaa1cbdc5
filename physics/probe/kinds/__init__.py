"""The built-in probe kinds; importing this package registers each one (physics.probe.registry)."""
from trapscape.physics.probe.kinds import magnet, soft, weak  # noqa: F401  (registers them)
