"""The append-only, hash-chained history of an estate: SQLite through sqlite-utils by default, or
a PostgreSQL server shared by a team (`--db postgresql://…`)."""
from tracker.history.store import (History, HistoryError, NewRevision, default_db_path, history_location,
                                   is_server_location, location_exists, shown_location)

__all__ = ["History", "HistoryError", "NewRevision", "default_db_path", "history_location", "is_server_location",
           "location_exists", "shown_location"]
