"""Reading site files: one pipeline (discover → read → validate → build → assemble), see `estate`."""
from tracker.loading.errors import InputError, LoadWarning
from tracker.loading.estate import Estate, load_estate, load_site

__all__ = ["InputError", "LoadWarning", "Estate", "load_estate", "load_site"]
