"""The append-only, hash-chained history of an estate (SQLite through sqlite-utils)."""
from tracker.history.store import History, HistoryError, NewRevision, default_db_path

__all__ = ["History", "HistoryError", "NewRevision", "default_db_path"]
