"""`trapscape` command line: one sub-command per module in viewers/commands/.

Exit codes: 0 done, 2 bad input (one clear line on stderr), 1 a bug.
"""
from __future__ import annotations

import argparse
import hashlib
import importlib
import os
import re
import sys
import threading
from pathlib import Path

from trapscape.scene.errors import SceneError

# One thread policy (DEVELOPERS.md, The engine's use of the machine): a `trapscape` process gives
# BLAS one thread unless the user chose a count. The engine's BLAS work is many small products,
# where a second BLAS thread only spins against numba's threads (2.5 x more CPU for `traps` on a
# quiet machine, issue 14). numba's OpenMP threads sleep when idle instead of spinning.
BLAS_THREAD_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")

# numba checks a cached kernel against its own file only, yet the cached code also holds the
# compiled helpers it calls from other files (placed.py, ellipint.py): the program keeps numba's
# cache in a folder named by a digest of every file that holds kernels, so an edit to any of them
# compiles afresh instead of loading stale code (tests/viewers/test_kernel_cache.py keeps the
# list whole).
KERNEL_SOURCES = (
    "scene/shapes/meshops.py", "scene/shapes/meshtree.py",
    "physics/field/box_distance.py", "physics/field/cuboid.py", "physics/field/cylinder.py",
    "physics/field/dipole_direct.py", "physics/field/ellipint.py", "physics/field/engine.py",
    "physics/field/flat_regions.py",
    "physics/field/placed.py",
    "physics/field/local_cells.py", "physics/field/polyhedron.py", "physics/field/radial.py",
    "physics/field/solid_harmonics.py", "physics/traps/escape.py",
    "viewers/csv_text.py",
)

COMMANDS = {
    "check": "validate a scene and list its parts, volumes and moments",
    "field": "B, H and |B| at points, along a line or on a plane",
    "traps": "equilibria of the probe with their classification",
    "hold": "pull of the magnets on steel plates against the gap",
    "sweep": "the traps across one or two [params] values, each followed, folds found",
    "screen": "many layouts against a spec: pass or fail, ranked, resumable",
    "render": "the 3D view, off-screen to a PNG or in a window",
    "export": "open-format data (.vti, .vtp, .stl) and an offline interactive view (.html)",
    "report": "the customer report: report.html (opens offline) and report.pdf",
    "demo": "the whole job on a bundled sample",
    "import": "a scene from CAD exports (STEP, 3MF, STL, OBJ, PLY): one magnet per body",
}
MODULES = {"import": "import_cad"}  # `import` is a Python keyword


class _Parser(argparse.ArgumentParser):
    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        # "-3,0,0.7" or "-.5" is a value, not an option (no option of ours starts with a digit)
        self._negative_number_matcher = re.compile(r"^-\.?\d")

    def error(self, message):  # argparse's own usage errors are bad input too: exit 2
        self.print_usage(sys.stderr)
        command = self.prog.removeprefix("trapscape").strip()
        raise SceneError(f"{command}: {message}" if command else message)


def build_parser() -> argparse.ArgumentParser:
    from importlib.metadata import PackageNotFoundError, version

    try:
        tool_version = version("trapscape")
    except PackageNotFoundError:
        tool_version = "unknown"
    parser = _Parser(prog="trapscape", description="Magnet traps: where small parts are caught.")
    parser.add_argument("--version", action="version", version=f"trapscape {tool_version}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, help_text in COMMANDS.items():
        module = importlib.import_module(f"trapscape.viewers.commands.{MODULES.get(name, name)}")
        command_parser = sub.add_parser(
            name, help=help_text, description=help_text, epilog="examples:\n" + module.EXAMPLES,
            formatter_class=argparse.RawDescriptionHelpFormatter)
        module.add_arguments(command_parser)
        command_parser.set_defaults(run=module.run)
    return parser


def _one_line_warning(message, category, filename, lineno, file=None, line=None):
    from trapscape.scene.errors import SceneWarning

    if issubclass(category, SceneWarning):
        print(f"trapscape: warning: {message}", file=sys.stderr)
    else:
        _default_showwarning(message, category, filename, lineno, file, line)


def _default_showwarning(*args):
    import warnings

    warnings._showwarnmsg_impl(warnings.WarningMessage(*args))


def _stop_on_terminate(signum, frame):
    """SIGTERM ends the run like Ctrl-C: through every `finally`, so no temporary file of an
    unfinished output is left beside its target."""
    raise KeyboardInterrupt


def main(argv=None) -> int:
    import signal
    import warnings

    warnings.showwarning = _one_line_warning
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _stop_on_terminate)
    try:
        parser = build_parser()
        args = parser.parse_args(argv)
        if not getattr(args, "run", None):
            parser.print_help(sys.stderr)
            return 2
        return int(args.run(args) or 0)
    except SceneError as error:
        print(f"trapscape: {error}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # e.g. piped into `head`: the reader has what it wanted
        sys.stderr.close()
        return 0
    except KeyboardInterrupt as stop:
        print("trapscape: interrupted", file=sys.stderr)
        _release_quietly(stop)
        return 130


def _release_quietly(stop: BaseException) -> None:
    """Free what the interrupted frames held, with finalizer errors silenced.

    An interrupt can land inside a library's constructor (numba compiling a kernel on first
    use), leaving an object whose ``__del__`` fails when freed: "Exception ignored in ..." with a
    traceback after "interrupted". The user stopped the run; that noise is not theirs.

    Parameters
    ----------
    stop : BaseException
        The interrupt, whose traceback holds the frames.
    """
    import gc
    import traceback

    previous = sys.unraisablehook
    sys.unraisablehook = lambda unraisable: None
    try:
        traceback.clear_frames(stop.__traceback__)
        stop.__traceback__ = None
        gc.collect()
    finally:
        sys.unraisablehook = previous


def use_thread_policy(environ=os.environ) -> bool:
    """Set the process's thread policy in the environment, before numpy and numba start.

    BLAS (OpenBLAS, MKL) one thread unless the user set one of BLAS_THREAD_VARIABLES; idle
    OpenMP threads (numba's) wait passively unless OMP_WAIT_POLICY is set. Both libraries read
    these when they load, so this does nothing once numpy is imported (a caller's process: the
    tests call main() with the BLAS they have).

    Returns
    -------
    bool
        Whether the BLAS setting was made here.
    """
    if "numpy" in sys.modules:
        return False
    environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")
    if any(name in environ for name in BLAS_THREAD_VARIABLES):
        return False
    environ["OPENBLAS_NUM_THREADS"] = "1"
    environ["MKL_NUM_THREADS"] = "1"
    return True


def use_kernel_cache(environ=os.environ) -> str | None:
    """Point numba's cache (NUMBA_CACHE_DIR) at `kernel_cache_folder`, before numba starts.

    Nothing is set when the user set NUMBA_CACHE_DIR, numba is already imported, or a source or
    the folder cannot be reached: numba then caches beside the sources, its default.

    Parameters
    ----------
    environ : mapping
        The environment to set.

    Returns
    -------
    str or None
        The folder set, or None.
    """
    if "NUMBA_CACHE_DIR" in environ or "numba" in sys.modules:
        return None
    base = environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    try:
        folder = kernel_cache_folder(Path(__file__).resolve().parents[1], Path(base))
        folder.mkdir(parents=True, exist_ok=True)
    except OSError:
        return None
    if not os.access(folder, os.W_OK):
        return None
    environ["NUMBA_CACHE_DIR"] = str(folder)
    return str(folder)


def kernel_cache_folder(root, base) -> Path:
    """base/trapscape/numba/DIGEST, DIGEST a sha256 of the KERNEL_SOURCES files under root.

    Parameters
    ----------
    root : pathlib.Path
        The folder holding scene/ and physics/.
    base : pathlib.Path
        The user's cache folder.

    Returns
    -------
    pathlib.Path
    """
    digest = hashlib.sha256()
    for name in KERNEL_SOURCES:
        digest.update(name.encode() + b"\0" + (root / name).read_bytes())
    return base / "trapscape" / "numba" / digest.hexdigest()[:16]


def console_main() -> int:
    """The `trapscape` program: the thread policy and numba's cache, then main(), then the end
    of the process (`end_without_teardown`)."""
    use_thread_policy()
    use_kernel_cache()
    code = main()
    end_without_teardown(code)
    return code  # (other threads still run: the usual exit)


def end_without_teardown(code: int) -> None:
    """End the process now, unless other threads run: the exit handlers run and stdout and
    stderr are flushed, but the modules are not torn down one by one, which takes 0.2-0.4 s
    once the engine and numba's compiler are loaded (measured 2026-12-03: 0.42 s against 0.03 s
    for a process that screened one layout). Every output is complete before main() returns
    (viewers.atomic), so nothing is lost.

    Parameters
    ----------
    code : int
        The exit code.
    """
    if threading.active_count() > 1:
        return
    import atexit

    atexit._run_exitfuncs()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed pipe or stream: nothing more to say
            pass
    os._exit(code)


if __name__ == "__main__":
    sys.exit(console_main())
