"""Run in worker processes by tests/test_parallel.py (importable by spawned workers)."""
import signal


def signals(_job):
    return signal.getsignal(signal.SIGTERM) is signal.SIG_DFL, signal.getsignal(signal.SIGINT) is signal.SIG_IGN
