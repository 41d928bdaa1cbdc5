"""The offline HTML export never touches the network: made inside a network namespace with no
network (`unshare -n`), it succeeds, fetches nothing, and holds the same scene as one made
with the network up."""
from __future__ import annotations

import base64
import io
import json
import re
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest
from repo_paths import SAMPLES

CLI = [sys.executable, "-m", "trapscape.viewers.cli"]


def _unshare_works() -> bool:
    if shutil.which("unshare") is None:
        return False
    return subprocess.run(["unshare", "-n", "true"], capture_output=True).returncode == 0


def _wasm_folders() -> list:
    try:
        import trame_vtklocal
    except ImportError:
        return []
    serve = Path(trame_vtklocal.__file__).parent / "module" / "serve"
    return sorted(p.name for p in serve.glob("wasm*"))


def scene_of(page: str) -> dict:
    """The page's embedded scene with the exporter's memory addresses numbered in order."""
    data = re.search(r'const base64Str = "([^"]+)"', page).group(1)
    with zipfile.ZipFile(io.BytesIO(base64.b64decode(data))) as package:
        text = package.read("index.json").decode()
    addresses = {}  # 64-bit pointers written as 16 hex digits, in ids, parents and references
    text = re.sub(r'(?<=["{])0000[0-9a-f]{12}(?=[-"}])',  # in strings only, digits-only too
                  lambda m: f"{addresses.setdefault(m.group(0), len(addresses)):016x}", text)
    return json.loads(text)


@pytest.mark.skipif(not _unshare_works(), reason="unshare -n is not permitted here (needs root "
                    "or user namespaces)")
def test_html_export_needs_no_network(tmp_path):
    pytest.importorskip("trame_pyvista", reason="the html extra is not installed")
    before = _wasm_folders()
    args = ["export", str(SAMPLES / "bead_chip.toml"), "--resolution", "16", "--quiet", "-o"]
    offline = subprocess.run(["unshare", "-n", *CLI, *args, str(tmp_path / "offline.html")],
                             capture_output=True, text=True, timeout=300)
    assert offline.returncode == 0, offline.stderr
    assert "Traceback" not in offline.stderr and "http" not in offline.stderr.lower()
    assert _wasm_folders() == before  # no download of trame's WebAssembly bundle was started
    online = subprocess.run([*CLI, *args, str(tmp_path / "online.html")], capture_output=True,
                            text=True, timeout=300)
    assert online.returncode == 0, online.stderr
    pages = [(tmp_path / f"{name}.html").read_text() for name in ("offline", "online")]
    assert scene_of(pages[0]) == scene_of(pages[1])
