"""The levels of physics/safety/limits.toml (each with its source), read once."""
from __future__ import annotations

import sys
from functools import lru_cache
from pathlib import Path

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

LIMITS_FILE = Path(__file__).with_name("limits.toml")


@lru_cache(maxsize=1)
def limits() -> dict:
    """The parsed limits file.

    Returns
    -------
    dict
        Tables implant, field_levels, air_transport, handling, demagnetization, flux_index.
    """
    with open(LIMITS_FILE, "rb") as handle:
        return tomllib.load(handle)
