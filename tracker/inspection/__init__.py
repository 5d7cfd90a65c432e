"""The inspection cycle: deadlines the law sets after an inspection and test (from
`tracker/data/deadlines.yaml`), each inspection's outcome, and the due items of a site."""
