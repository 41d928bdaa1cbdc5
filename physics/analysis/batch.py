"""Many analyses at once on an executor the caller owns.

A job is a scene file, its --set overrides and what to compute; its result is JSON-ready (the
same payloads as the `check`, `traps` and `hold` commands, and the field at points). The caller
passes anything with `submit` (a concurrent.futures executor, or later a Dask client's
executor); each job switches the engine of the process it runs in to in-process mode
(physics.field.engine), so the pool's workers are the only parallelism. Results do not depend on
the executor: with none, the jobs run one after another here, in in-process mode too, and give
the same JSON. (The command line's default engine agrees to rounding: see engine's docstring.)
"""
from __future__ import annotations

import concurrent.futures
import multiprocessing
import os
import signal
from dataclasses import dataclass, field

import numpy as np

from trapscape.physics.analysis.forking import end_with, fork_is_safe
from trapscape.physics.analysis.results import json_ready
from trapscape.physics.analysis.run import load_analysis
from trapscape.physics.field import engine
from trapscape.scene.errors import SceneError

KINDS = ("check", "traps", "hold", "field")


@dataclass(frozen=True)
class Job:
    """One analysis to run.

    Parameters
    ----------
    scene : str
        Path of the scene file.
    overrides : tuple of str
        ``--set`` overrides, e.g. ``("gap=4",)``.
    compute : tuple of str
        Any of "check", "traps", "hold", "field".
    gaps : tuple of float
        For "hold": the air gaps in the scene's unit.
    part, plate : str, optional
        For "hold": the moving magnet (default all) and the plate (default the nearest).
    friction : float, optional
        For "hold": the friction coefficient for the slip force.
    points : tuple of (x, y, z)
        For "field": points in the scene's unit.
    """

    scene: str
    overrides: tuple = ()
    compute: tuple = ("traps",)
    gaps: tuple = ()
    part: str | None = None
    plate: str | None = None
    friction: float | None = None
    points: tuple = field(default=())

    def __post_init__(self):
        unknown = [k for k in self.compute if k not in KINDS]
        if unknown:
            raise ValueError(f"Job.compute: unknown {unknown}; choose from {KINDS}")
        if "hold" in self.compute and not self.gaps:
            raise ValueError("Job.compute has 'hold' but no gaps")
        if "field" in self.compute and not len(self.points):
            raise ValueError("Job.compute has 'field' but no points")


def run_job(job: Job) -> dict:
    """Run one job in this process, with the engine as it is set here.

    Parameters
    ----------
    job : Job

    Returns
    -------
    dict
        ``{"scene": path, "overrides": [...], <kind>: payload for each kind computed}``, JSON-
        ready; a user error (SceneError) gives ``"error": its sentence`` instead of payloads.
    """
    result = {"scene": str(job.scene), "overrides": list(job.overrides)}
    try:
        analysis = load_analysis(job.scene, job.overrides)
        scale = analysis.scene.unit_scale
        for kind in job.compute:
            if kind == "check":
                result["check"] = analysis.check_result()
            elif kind == "traps":
                result["traps"] = analysis.traps_result()
            elif kind == "hold":
                gaps_m = np.asarray(job.gaps, float) * scale
                result["hold"] = analysis.hold_result(gaps_m, part=job.part, plate=job.plate,
                                                      friction=job.friction)
            else:
                result["field"] = _field_payload(analysis, np.asarray(job.points, float) * scale)
    except SceneError as error:
        result = {"scene": str(job.scene), "overrides": list(job.overrides), "error": str(error)}
    return json_ready(result)


def run_job_in_worker(job: Job) -> dict:
    """`run_job` with the engine in in-process mode (one thread, no child processes) for its
    duration: what the executor's workers run.

    Parameters
    ----------
    job : Job

    Returns
    -------
    dict
        As `run_job`.
    """
    with engine.in_process_mode():
        return run_job(job)


def run_batch(jobs, executor=None) -> list:
    """Run jobs on the caller's executor; results in the order of the jobs.

    Parameters
    ----------
    jobs : iterable of Job
    executor : concurrent.futures.Executor-like, optional
        Anything with ``submit(fn, *args) -> future`` whose futures have ``result()``. None runs
        the jobs one after another here, in the engine's in-process mode (restored after).

    Returns
    -------
    list of dict
        One `run_job` result per job.
    """
    jobs = list(jobs)
    if executor is None:
        with engine.in_process_mode():
            return [run_job(job) for job in jobs]
    futures = [executor.submit(run_job_in_worker, job) for job in jobs]
    return [future.result() for future in futures]


def process_pool(workers: int = 2) -> concurrent.futures.ProcessPoolExecutor:
    """A pool of worker processes for `run_batch`, each in the engine's in-process mode.

    The workers start warm when they can: forked from this process, they inherit the engine's
    modules it has imported and numba's loaded compiler (a fresh process spends most of a small
    layout's time importing and loading them).
    A child forked from a process that has started numba's threading layer (GNU OpenMP, the
    fastest here for the many small kernel calls of a trap search) is killed by numba on its
    first parallel kernel, so such a process gets workers from a fork server instead, which
    imports the engine once for all of them (`worker_context`).

    Parameters
    ----------
    workers : int
        Worker processes (one per core is right: each worker runs on one thread).

    Returns
    -------
    concurrent.futures.ProcessPoolExecutor
    """
    context = worker_context()
    forked = context.get_start_method() == "fork"
    if forked:
        engine.load_compiler()
    return concurrent.futures.ProcessPoolExecutor(
        max_workers=workers, mp_context=context, initializer=start_worker,
        initargs=(os.getpid() if forked else None,))


# what a fork server imports before it forks workers (the whole engine comes with them)
WORKER_MODULES = ["trapscape.physics.analysis.screen", "trapscape.physics.analysis.sweep"]


def worker_context():
    """The multiprocessing context of the pool's workers: "fork" where a forked worker is safe,
    else a fork server that has imported the engine (WORKER_MODULES).

    Forking is safe as `forking.fork_is_safe` says.

    Returns
    -------
    multiprocessing.context.BaseContext
    """
    if fork_is_safe():
        return multiprocessing.get_context("fork")
    context = multiprocessing.get_context("forkserver")
    context.set_forkserver_preload(WORKER_MODULES)
    return context


def start_worker(parent: int | None = None) -> None:
    """A pool worker's start: the engine in in-process mode, and SIGTERM ending the worker
    whatever handler a forked worker inherited (the command line's turns it into Ctrl-C).

    Parameters
    ----------
    parent : int, optional
        The pid of the process the worker was forked from: the worker ends when it does. (Its
        siblings hold copies of the pool's pipes, so a worker of a killed parent would never
        see them close and would wait for work for ever.)
    """
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if parent is not None:
        end_with(parent)
    engine.use_in_process()


def _field_payload(analysis, points_m) -> dict:
    values = analysis.field_at(points_m)
    scene = analysis.scene
    return {"length_unit": scene.units, "points": points_m / scene.unit_scale,
            "B_T": values.B, "H_A_per_m": values.H,
            "B_abs_T": np.linalg.norm(values.B, axis=1), "in_model": values.in_model}
