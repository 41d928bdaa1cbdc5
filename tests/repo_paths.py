"""Where the repository and its samples are, for tests in any folder."""
from pathlib import Path

from trapscape.scene.files import is_scene_file

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "samples"


def sample_scenes() -> list:
    """The sample scenes (samples/*.toml, the screening specs beside them left out)."""
    return sorted(p for p in SAMPLES.glob("*.toml") if is_scene_file(p))
