"""Rendering check results: the `check --json` document (SPEC §5) and the text report."""
