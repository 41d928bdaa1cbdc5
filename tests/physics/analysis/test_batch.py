"""A batch of analyses on a process pool gives the JSON of the same jobs run one after another."""
from __future__ import annotations

import concurrent.futures
import json
import subprocess
import sys
import time

import numba
import pytest
from repo_paths import SAMPLES

from trapscape.physics.analysis.batch import Job, process_pool, run_batch, worker_context

# eight variants of the level gauge: the tube moved out and the bead resized
VARIANTS = [("gap=2.5",), ("gap=3",), ("gap=3.5",), ("gap=4",),
            ("bead=2.5",), ("bead=3.5",), ("gap=3.5", "bead=2"), ("ring_radius=15",)]


def level_gauge_jobs():
    return [Job(str(SAMPLES / "level_gauge.toml"), overrides=v) for v in VARIANTS]


def test_eight_trap_searches_on_two_worker_processes_equal_eight_sequential_runs():
    jobs = level_gauge_jobs()
    started = time.perf_counter()
    with process_pool(2) as pool:
        batched = run_batch(jobs, executor=pool)
    in_pool = time.perf_counter() - started
    started = time.perf_counter()
    sequential = run_batch(jobs)  # one after another, in this process
    one_by_one = time.perf_counter() - started
    print(f"8 trap searches: {one_by_one:.1f} s one after another, {in_pool:.1f} s on 2 workers")
    assert all("error" not in r for r in batched), [r.get("error") for r in batched]
    assert batched == sequential
    # the variants differ, so equal lists mean each job's own answer came back in its place
    positions = [tuple(e["position"][2] for e in r["traps"]["equilibria"]) for r in batched]
    assert len(set(map(tuple, ([r["overrides"] for r in batched])))) == 8
    assert len(set(positions)) > 1


def test_a_bad_override_is_that_job_s_error_not_the_batch_s():
    jobs = [Job(str(SAMPLES / "level_gauge.toml"), overrides=("gap=2.5",), compute=("check",)),
            Job(str(SAMPLES / "level_gauge.toml"), overrides=("no_such=1",), compute=("check",))]
    with concurrent.futures.ThreadPoolExecutor(max_workers=2) as pool:
        good, bad = run_batch(jobs, executor=pool)
    assert good["check"]["params"]["gap"] == 2.5
    assert "no_such" in bad["error"] and "check" not in bad


def test_hold_and_field_jobs_match_the_analysis():
    from trapscape.physics.analysis.run import load_analysis

    path = str(SAMPLES / "holding_plate.toml")
    job = Job(path, compute=("hold", "field"), gaps=(0.0, 1.0), friction=0.2,
              points=((0.0, 0.0, 20.0), (1.0, 2.0, 30.0)))
    result = run_batch([job])[0]
    analysis = load_analysis(path)
    rows = analysis.hold([0.0, 1.0 * analysis.scene.unit_scale], friction=0.2).rows
    assert [r["pull_N"] for r in result["hold"]["rows"]] == [r.pull for r in rows]
    assert result["field"]["points"] == [[0.0, 0.0, 20.0], [1.0, 2.0, 30.0]]
    assert len(result["field"]["B_T"]) == 2


@pytest.mark.parametrize("bad", [dict(compute=("nothing",)), dict(compute=("hold",)),
                                 dict(compute=("field",))])
def test_a_job_says_what_it_lacks(bad):
    with pytest.raises(ValueError):
        Job("scene.toml", **bad)


def _threads_in_worker(_):
    from threadpoolctl import threadpool_info

    blas = [pool["num_threads"] for pool in threadpool_info() if pool["user_api"] == "blas"]
    return numba.get_num_threads(), blas


def test_a_process_that_started_numba_threads_gets_workers_from_a_fork_server_on_one_thread():
    numba.get_num_threads()  # starts numba's threading layer here, as any analysis does
    # a child forked now would be killed by numba on its first parallel kernel
    assert worker_context().get_start_method() == "forkserver"
    with process_pool(2) as pool:
        reports = list(pool.map(_threads_in_worker, range(4)))
    assert all(threads == 1 and set(blas) <= {1} for threads, blas in reports), reports


FRESH_PROCESS = """
import json, sys
import numba
from trapscape.physics.analysis.batch import Job, process_pool, run_batch, worker_context, worker_context
jobs = [Job(sys.argv[1], overrides=(f"gap={g}",)) for g in (2.5, 3.5, 4.5)]
method = worker_context().get_start_method()
with process_pool(2) as pool:
    pooled = run_batch(jobs, executor=pool)
    threads = {pool.submit(numba.get_num_threads).result() for _ in range(4)}
    pids = {pool.submit(__import__("os").getppid).result() for _ in range(4)}
print(json.dumps({"method": method, "threads": sorted(threads), "same": pooled == run_batch(jobs),
                  "parent": sorted(pids) == [__import__("os").getpid()]}))
"""


def test_a_fresh_process_forks_its_workers_warm_each_on_one_thread_with_the_same_answers():
    run = subprocess.run([sys.executable, "-c", FRESH_PROCESS, str(SAMPLES / "level_gauge.toml")],
                         capture_output=True, text=True, timeout=600, check=False)
    assert run.returncode == 0, run.stderr
    report = json.loads(run.stdout.splitlines()[-1])
    assert report == {"method": "fork", "threads": [1], "same": True, "parent": True}
