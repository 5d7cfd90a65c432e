"""The README's two commands are the ones that work: .ci/run runs the README's test command."""
from __future__ import annotations

import re

from tests.conftest import ROOT


def _commands(text: str) -> list[str]:
    return [m.strip() for m in re.findall(r"```sh\n(.*?)\n```", text, flags=re.S)]


def test_ci_runs_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    commands = _commands(readme)
    test_cmd = next(c for c in commands if "pytest" in c)
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert test_cmd in ci


def test_readme_carries_the_caution():
    readme = " ".join((ROOT / "README.md").read_text(encoding="utf-8").lower().replace(">", " ").split())
    assert "competent person" in readme and "qualified people" in readme
    assert "manufacturers' data" in readme
