"""Errors a user can fix: one plain sentence saying what, where and how."""


class SceneError(Exception):
    """Bad input. The CLI prints str(error) on one line and exits with code 2."""


class SceneWarning(UserWarning):
    """Something suspicious the user should know about (e.g. overlapping magnets)."""
