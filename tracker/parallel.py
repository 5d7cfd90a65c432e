"""Worker processes for work that splits by site (a check, a watcher's start).

`each_in_runs` is the one rule for when and how such work is shared out.

- Workers take the default SIGTERM and ignore SIGINT: the parent alone decides when to stop (a
  forked worker would otherwise inherit, say, the watcher's "stop softly" handler and never die).
- When other threads are running (a watcher's observer, the terminal UI), workers are spawned,
  not forked: a fork copies locks that another thread may be holding.
- The pool is closed and joined once every result is in; it is terminated only when its consumer
  stops early.
- Starting workers hands the real standard error on to them; where it has been replaced by an
  object without a file descriptor (the terminal UI captures it while it runs), the process's
  original one is handed on instead.
"""
from __future__ import annotations

import os
import signal
import sys
import threading
from contextlib import contextmanager


JOBS_PER_CORE = 4   # worker processes at most per core (more only adds memory and waiting)


def available_cores() -> int:
    """Cores this process may run on (its CPU affinity where the system has one: a container or
    `taskset` may allow fewer than the machine has)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def max_jobs() -> int:
    return available_cores() * JOBS_PER_CORE


def _start_worker(initializer, initargs) -> None:
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if initializer is not None:
        initializer(*initargs)


@contextmanager
def _stderr_with_a_descriptor():
    try:
        usable = sys.stderr.fileno() >= 0
    except (AttributeError, OSError, ValueError):
        usable = False
    if usable or sys.__stderr__ is None:
        yield
        return
    saved, sys.stderr = sys.stderr, sys.__stderr__
    try:
        yield
    finally:
        sys.stderr = saved


def ordered_results(func, jobs_list: list, processes: int, initializer=None, initargs=()):
    """func(job) for every job, computed by `processes` workers, yielded in the jobs' order."""
    import multiprocessing as mp   # (here: a check that needs no workers starts without it)
    methods = mp.get_all_start_methods()
    method = "fork" if "fork" in methods and threading.active_count() == 1 else "spawn"
    with _stderr_with_a_descriptor():
        pool = mp.get_context(method).Pool(processes, initializer=_start_worker, initargs=(initializer, initargs))
    finished = False
    try:
        yield from pool.imap(func, jobs_list)
        finished = True
    finally:
        if finished:
            pool.close()
        else:
            pool.terminate()
        pool.join()


# -- work that splits by site -------------------------------------------------------------------

MIN_ITEMS_FOR_WORKERS = 40   # fewer items are worked in this process: starting workers would not pay
MAX_RUN = 50                 # at most this many items go to a worker at once

_WORK = None   # (work, shared) of a worker process, set by _set_work


def _set_work(work, shared) -> None:
    global _WORK
    _WORK = (work, shared)


def _work_run(run: list) -> list:
    work, shared = _WORK
    return [work(shared, item) for item in run]


def each_in_runs(work, items: list, shared, jobs: int):
    """work(shared, item) for every item, yielded in the items' order.

    With `jobs` > 1 and enough items, workers take runs of items (about eight runs per worker,
    at most MAX_RUN items each, so that a slow run does not hold the others up); otherwise the
    items are worked here. `work` is a module-level function and `shared` is picklable (both go
    to each worker once, at its start).
    """
    jobs = min(jobs, max_jobs())
    if jobs <= 1 or len(items) < MIN_ITEMS_FOR_WORKERS:
        for item in items:
            yield work(shared, item)
        return
    size = max(1, min(MAX_RUN, len(items) // (jobs * 8)))
    runs = [items[i:i + size] for i in range(0, len(items), size)]
    for batch in ordered_results(_work_run, runs, jobs, initializer=_set_work, initargs=(work, shared)):
        yield from batch
