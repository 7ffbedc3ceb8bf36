"""Shared timing helpers for the benchmark scripts (not part of the package).

Every benchmark prints wall and CPU time side by side and the machine's load when
it started, so that a verdict can be read against how busy the machine was.  Run
the scripts from the repository root, e.g. ``python benchmarks/bench_rank.py``.
"""

import os
import resource
import subprocess
import time

__all__ = ["machine_line", "timed", "best_of", "process_times"]


def machine_line():
    """'cores 2; load 0.52 0.31 0.20 (1, 5, 15 min)' for the benchmark's header."""
    one, five, fifteen = os.getloadavg()
    return f"cores {os.cpu_count()}; load {one:.2f} {five:.2f} {fifteen:.2f} (1, 5, 15 min)"


def timed(fn, *args, **kwargs):
    """Run ``fn`` once; return (result, wall seconds, CPU seconds of this process).

    CPU time is ``time.process_time`` (all threads of this process, user + system),
    so a multi-threaded step shows CPU > wall.
    """
    c0, w0 = time.process_time(), time.perf_counter()
    out = fn(*args, **kwargs)
    return out, time.perf_counter() - w0, time.process_time() - c0


def best_of(n, fn, *args, **kwargs):
    """Best (smallest) wall and CPU time of ``n`` runs of ``fn``; returns (result, wall, cpu)."""
    best_w = best_c = float("inf")
    out = None
    for _ in range(n):
        out, w, c = timed(fn, *args, **kwargs)
        best_w, best_c = min(best_w, w), min(best_c, c)
    return out, best_w, best_c


def process_times(cmd, repeat=3, env=None):
    """Best wall and CPU time (user + system, children included) of a whole command.

    Parameters
    ----------
    cmd : list of str
    repeat : int
    env : dict, optional

    Returns
    -------
    (wall seconds, CPU seconds), each the minimum over ``repeat`` runs.
    """
    walls, cpus = [], []
    for _ in range(repeat):
        r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
        w0 = time.perf_counter()
        subprocess.run(
            cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env
        )
        walls.append(time.perf_counter() - w0)
        r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append((r1.ru_utime - r0.ru_utime) + (r1.ru_stime - r0.ru_stime))
    return min(walls), min(cpus)
