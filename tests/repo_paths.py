"""Where the repository and its samples are, for tests in any folder."""
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "samples"
