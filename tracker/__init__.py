"""izwatch core: the estate model, loading, the graph, the checks, the history and the watcher.

This package never imports Textual or rich (tests/test_layering.py holds it to that), so the
command line starts fast and the core can be used without a terminal.
"""
__version__ = "0.1.0"
