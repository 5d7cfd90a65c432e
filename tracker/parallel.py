"""Worker processes for work that splits by site (a check, a watcher's start).

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

import multiprocessing as mp
import signal
import sys
import threading
from contextlib import contextmanager


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
