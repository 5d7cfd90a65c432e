"""Worker processes for work that splits by site (a check, a watcher's start).

- Workers take the default SIGTERM and ignore SIGINT: the parent alone decides when to stop (a
  forked worker would otherwise inherit, say, the watcher's "stop softly" handler and never die).
- When other threads are running (a watcher's observer, the terminal UI), workers are spawned,
  not forked: a fork copies locks that another thread may be holding.
- The pool is closed and joined once every result is in; it is terminated only when its consumer
  stops early.
"""
from __future__ import annotations

import multiprocessing as mp
import signal
import threading


def _start_worker(initializer, initargs) -> None:
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if initializer is not None:
        initializer(*initargs)


def ordered_results(func, jobs_list: list, processes: int, initializer=None, initargs=()):
    """func(job) for every job, computed by `processes` workers, yielded in the jobs' order."""
    methods = mp.get_all_start_methods()
    method = "fork" if "fork" in methods and threading.active_count() == 1 else "spawn"
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
