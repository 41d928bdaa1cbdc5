"""tests/ itself is on sys.path (pytest puts a conftest's folder there), so the shared helpers
(scene_factory, forces_factory, golden_outputs, repo_paths) import by name from any test folder."""
