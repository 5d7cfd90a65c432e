"""Change tracking: element-level diffs, the checks a change affects, transitions, estate state."""
