"""No module of tracker/ imports a private name (`_x`) of another package: what one package
offers another is its public names, so a package can change its insides without breaking others."""
from __future__ import annotations

import ast
from pathlib import Path

import tracker

ROOT = Path(tracker.__file__).parent


def _package(module: str) -> str:
    """tracker.loading.estate → tracker.loading; a top-level module (tracker.graph) is its own."""
    parts = module.split(".")
    return ".".join(parts[:2])


def _module_of(path: Path, root: Path) -> str:
    rel = path.relative_to(root.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _private(name: str) -> bool:
    return name.startswith("_") and not (name.startswith("__") and name.endswith("__"))   # __version__ is public


def private_imports(root: Path = ROOT) -> list[str]:
    found = []
    for path in sorted(root.rglob("*.py")):
        here = _module_of(path, root)
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
            if not isinstance(node, ast.ImportFrom) or node.level or not (node.module or "").startswith("tracker"):
                continue
            if _package(node.module) == _package(here):
                continue
            for alias in node.names:
                if _private(alias.name):
                    found.append(f"{path.relative_to(root.parent)}:{node.lineno}: {alias.name} from {node.module}")
    return found


def test_no_module_imports_a_private_name_of_another_package():
    assert private_imports() == []


def test_the_walk_finds_one(tmp_path):
    """The check itself can fail: a module importing `_inside` across packages is named; within
    a package, and a dunder such as __version__, are allowed."""
    package = tmp_path / "tracker"
    (package / "commands").mkdir(parents=True)
    (package / "loading").mkdir()
    (package / "__init__.py").write_text("")
    (package / "commands" / "x.py").write_text("from tracker.loading.estate import _inside, site_folders\n"
                                               "from tracker import __version__\n")
    (package / "loading" / "y.py").write_text("from tracker.loading.estate import _inside\n")
    assert private_imports(package) == ["tracker/commands/x.py:1: _inside from tracker.loading.estate"]
