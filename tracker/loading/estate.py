"""Loading sites: one pipeline for `check`, `report`, the watcher and the UI.

discover (`discover`: which folders and files) → read (bytes, within the safe reader's limits:
`yamlread`) → validate (`schema_check`) → build (`build`) → assemble (`assemble_site`: the files
of one folder into one :class:`Site`, with the site-wide checks of `semantic`).

Loading a site gives either a complete, valid :class:`Site` or its errors: a site with any error
is not half-loaded. The stages are public so that the watcher can keep each file's last good
result (:func:`read_content`) and assemble a folder again after one file changes; the whole
folder from disk is :func:`load_site`, a whole estate :func:`load_estate`. The rule that site
ids are unique across an estate is :func:`duplicate_site_id`.
"""
from __future__ import annotations

import hashlib
import re
import zlib
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath

from tracker.loading import build, schema_check, semantic, yamlread
from tracker.loading.build import own_allowances
from tracker.loading.discover import (SITE_FILE, STATE_DIR, EstateError, estate_files, inside, not_a_file,
                                      read_regular, relative, site_files, site_folders, split_problems)
from tracker.loading.errors import InputError, LoadWarning, sort_problems
from tracker.model import Site

__all__ = ["SITE_FILE", "STATE_DIR", "EstateError", "Estate", "FileResult", "SiteLoad", "assemble_site",
           "duplicate_site_id", "estate_files", "inside", "load_estate", "load_site", "read_content", "read_file",
           "sha256_hex", "site_files", "site_folder_of", "site_folders", "split_problems"]

SITE_ID = re.compile(r"[a-z0-9][a-z0-9._-]*")      # matched whole (fullmatch): "flat-1\n" is no id


@dataclass(slots=True)
class FileResult:
    """One file read and checked on its own.

    Only what assembling a site needs is kept once the file is built: the built elements, which
    top-level keys it has, and its text compressed (to locate a problem found later, when the file
    is assembled with others).
    """

    rel: str
    sha256: str | None
    packed: bytes | None = None     # the text, zlib-compressed
    keys: frozenset | None = None   # top-level keys; None: the file did not parse
    supply: object = None
    site_meta: dict | None = None
    boards: list = field(default_factory=list)
    circuits: list = field(default_factory=list)
    inspections: list = field(default_factory=list)
    errors: list = field(default_factory=list)    # InputError
    warnings: list = field(default_factory=list)  # LoadWarning
    broken: set = field(default_factory=set)      # ids of elements not built (schema errors)

    @property
    def text(self) -> str | None:
        return None if self.packed is None else zlib.decompress(self.packed).decode("utf-8")

    @property
    def parsed(self) -> bool:
        return self.keys is not None


@dataclass(slots=True)
class SiteLoad:
    folder: str                     # relative folder ('' for a single site)
    site: Site | None
    files: dict[str, str | None]    # rel file -> sha256 of its content
    errors: list[InputError]
    warnings: list[LoadWarning]


@dataclass
class Estate:
    root: Path
    single_site: bool
    sites: dict[str, Site] = field(default_factory=dict)
    loads: dict[str, SiteLoad] = field(default_factory=dict)   # by folder
    errors: list[InputError] = field(default_factory=list)
    warnings: list[LoadWarning] = field(default_factory=list)


def sha256_hex(raw: bytes) -> str:
    return hashlib.sha256(raw).hexdigest()


# -- read, validate and build one file ----------------------------------------------------------

def read_file(path: Path, rel: str) -> FileResult:
    """Read one file from disk, then as :func:`read_content`. A name that holds no regular file
    is an error naming what it holds, and is never opened (a FIFO would block)."""
    what = not_a_file(path)
    if what is not None:
        return FileResult(rel, None, errors=[InputError(rel, 1, 1, f"is {what}, not a site file")])
    try:
        raw = read_regular(path)
    except OSError as exc:
        return FileResult(rel, None, errors=[InputError(rel, 1, 1, f"cannot be read ({exc.strerror})")])
    return read_content(raw, rel)


def read_content(raw: bytes, rel: str, digest: str | None = None) -> FileResult:
    """Decode, parse, validate and build one file's bytes (`digest`: their sha256, if known)."""
    digest = digest or sha256_hex(raw)
    text, errors = yamlread.decode(raw, rel)
    result = FileResult(rel, digest)
    if text is not None:
        result.packed = zlib.compress(text.encode("utf-8"), 1)
    if errors:
        result.errors = errors
        return result
    doc, errors = yamlread.parse(text, rel)
    if errors:
        result.errors = errors
        return result
    result.keys = frozenset(k for k in doc if isinstance(k, str))
    yamlread.dates_as_text(doc)
    locator = None
    bad: set[tuple] = set()
    refused = not schema_check.is_valid(doc)
    if refused:
        # Report every schema problem, then build the elements that have none, so that the
        # site-wide checks can report their problems in the same run.
        locator = yamlread.Locator(text)
        found = schema_check.problems(doc)
        result.errors = [InputError(rel, *locator.locate(path), message, path) for path, message in found]

        bad = {path[:2] for path, _ in found}
        result.broken = _broken_ids(doc, bad)
    p = build.Problems(rel)
    build.build_top(doc, p)
    if isinstance(doc.get("site"), dict) and not any(b[:1] == ("site",) for b in bad):
        result.site_meta = doc["site"]
    elif "site" in doc:
        result.broken.add("site")
    if "supply" in doc and ("supply",) not in bad and not any(b[:1] == ("supply",) for b in bad):
        result.supply = build.build_supply(doc["supply"], p)
    elif "supply" in doc:
        result.broken.add("supply")
    result.boards = [build.build_board(b, i, p) for i, b in _good(doc, "boards", bad)]
    result.circuits = [build.build_circuit(c, i, p) for i, c in _good(doc, "circuits", bad)]
    result.inspections = [x for x in (build.build_inspection(d, i, p) for i, d in _good(doc, "inspections", bad))
                          if x is not None]
    if p.errors or p.warnings:
        locator = locator or yamlread.Locator(text)
        result.errors += [InputError(f, *locator.locate(path), m, path) for f, path, m in p.errors]
        result.warnings = [LoadWarning(f, *locator.locate(path), m, path) for f, path, m in p.warnings]
    if refused and not result.errors:
        # the fast validator refused the file and nothing named a problem: never take it as valid
        result.errors = [InputError(rel, 1, 1, "the file does not match the site file schema, but no single "
                                               "problem could be named (please report it)")]
    return result


def _good(doc: dict, key: str, bad: set[tuple]):
    items = doc.get(key) or ()
    if (key,) in bad or not isinstance(items, list):
        return
    for i, item in enumerate(items):
        if (key, i) not in bad:
            yield i, item


def _broken_ids(doc: dict, bad: set[tuple]) -> set:
    """Ids of elements left unbuilt, so references to them draw no second error."""
    broken: set = set()
    for key, index in (b for b in bad if len(b) == 2):
        if key not in ("boards", "circuits"):
            continue
        items = doc.get(key)
        if not isinstance(items, list) or not isinstance(index, int):
            continue
        item = items[index]
        if not isinstance(item, dict):
            continue
        if key == "boards":
            broken.add(("board", str(item.get("id"))))
        else:
            broken.add(("circuit", f"{item.get('board')}/{item.get('id')}"))
            if item.get("feeds") is not None:
                broken.add(("feeder-of", str(item.get("feeds"))))
    return broken


# -- assemble a folder's files into a site -----------------------------------------------------

def assemble_site(folder_name: str, rel_folder: str, results: list[FileResult],
                  warnings: list | None = None) -> SiteLoad:
    """A site from its files' results (site.yaml first): complete and valid, or its errors."""
    warnings = list(warnings or [])
    errors: list[InputError] = []
    results = sorted(results, key=lambda r: (PurePosixPath(r.rel).name != SITE_FILE, r.rel))
    for r in results:
        errors.extend(r.errors)
        warnings.extend(r.warnings)
    hashes = {r.rel: r.sha256 for r in results}
    if not results or PurePosixPath(results[0].rel).name != SITE_FILE:
        where = f"{rel_folder}/{SITE_FILE}" if rel_folder else SITE_FILE
        errors.append(InputError(where, 1, 1, f"{SITE_FILE} is missing: the folder's other files are not read"))
        return SiteLoad(rel_folder, None, hashes, sort_problems(errors), sort_problems(warnings))
    if not all(r.parsed for r in results):  # unreadable or unparsable: nothing more to check
        return SiteLoad(rel_folder, None, hashes, sort_problems(errors), sort_problems(warnings))

    main = results[0]
    broken = set().union(*(r.broken for r in results))
    for r in results[1:]:
        for key in ("site", "supply"):
            if key in r.keys:
                errors.append(InputError(r.rel, *yamlread.Locator(r.text).locate((key,)),
                                         f"'{key}' belongs in {SITE_FILE}, not in a board file", (key,)))
    if main.supply is None and "supply" not in broken:
        errors.append(InputError(main.rel, 1, 1, f"{SITE_FILE} needs a 'supply' section (system, ze_ohm, ...)"))
    meta = main.site_meta or {}
    site_id = meta.get("id") or (folder_name if rel_folder == "" else rel_folder)
    if "site" not in broken and not SITE_ID.fullmatch(site_id):   # (a broken site: has its schema errors already)
        errors.append(InputError(main.rel, 1, 1, f"the folder name '{site_id}' is not a valid site id "
                                                 "(lower-case letters, digits, '.', '_', '-'); give site.id"))
    boards = [b for r in results for b in r.boards]
    circuits = [c for r in results for c in r.circuits]
    inspections = semantic.keyed_inspections([x for r in results for x in r.inspections])
    text_of = {r.rel: r.text for r in results}
    locators: dict[str, yamlread.Locator] = {}
    found = list(semantic.check_site(boards, circuits, broken, supply=main.supply))
    found += semantic.check_inspections(inspections, circuits, broken)
    for file, path, message in found:
        loc = locators.setdefault(file, yamlread.Locator(text_of[file]))
        errors.append(InputError(file, *loc.locate(path), message, path))
    if errors:
        return SiteLoad(rel_folder, None, hashes, sort_problems(errors), sort_problems(warnings))
    site = Site(
        id=site_id,
        supply=main.supply,
        name=meta.get("name", ""),
        rules=meta.get("rules", "bs7671"),
        premises=meta.get("premises", "domestic"),
        diversity=own_allowances(meta.get("diversity")),
        boards=tuple(boards),
        circuits=tuple(circuits),
        jurisdiction=meta.get("jurisdiction", "england"),
        tenure=meta.get("tenure"),
        inspections=inspections,
        folder=rel_folder,
        files=tuple(r.rel for r in results),
    )
    return SiteLoad(rel_folder, site, hashes, [], sort_problems(warnings))


# -- whole folders, whole estates ---------------------------------------------------------------

def load_site(folder: Path, rel_folder: str, root: Path) -> SiteLoad:
    """One site folder from disk, every stage."""
    files, warnings = site_files(folder, root)
    results = [read_file(path, relative(path, root)) for path in files]
    return assemble_site(folder.resolve().name, rel_folder, results, warnings)


def duplicate_site_id(site_id: str, first_file: str, other_file: str) -> InputError:
    """The error of a site (its first file `first_file`) whose id another site (its first file
    `other_file`) has taken: site ids are unique across an estate."""
    return InputError(first_file, 1, 1, f"site id '{site_id}' is already used by {other_file}; "
                                        "site ids must be unique")


def load_estate(root: Path | str) -> Estate:
    """Load every site under `root`. Raises EstateError when the path itself is unusable."""
    root = Path(root)
    single, folders, problems = site_folders(root)
    errors, warnings = split_problems(problems)
    estate = Estate(root=root, single_site=single, errors=errors, warnings=warnings)
    for folder, rel in folders:
        loaded = load_site(folder, rel, root)
        estate.loads[rel] = loaded
        estate.errors.extend(loaded.errors)
        estate.warnings.extend(loaded.warnings)
        if loaded.site is None:
            continue
        if loaded.site.id in estate.sites:
            estate.errors.append(duplicate_site_id(loaded.site.id, loaded.site.files[0],
                                                   estate.sites[loaded.site.id].files[0]))
            continue
        estate.sites[loaded.site.id] = loaded.site
    estate.errors = sort_problems(estate.errors)
    estate.warnings = sort_problems(estate.warnings)
    return estate


def site_folder_of(root: Path, site_id: str) -> str | None:
    """The folder (relative; '' for a single site) of the site with this id, or None.

    Only each candidate's site.yaml is read (by the safe reader, within its limits), the folder
    named like the id first; a site.yaml that does not load counts under its folder's name (so
    that the command can then list what is wrong with it).
    """
    single, folders, _ = site_folders(root)
    if single:
        return ""
    by_name = {rel: folder for folder, rel in folders}
    order = ([site_id] if site_id in by_name else []) + [rel for rel in by_name if rel != site_id]
    for rel in order:
        if (_declared_id(by_name[rel] / SITE_FILE) or rel) == site_id:
            return rel
    return None


def _declared_id(path: Path) -> str | None:
    """site.id as a site.yaml declares it, if it loads and says so."""
    try:
        raw = read_regular(path)      # never blocks on a FIFO under the name
    except OSError:
        return None
    text, errors = yamlread.decode(raw, path.name)
    if errors:
        return None
    doc, errors = yamlread.parse(text, path.name)
    meta = doc.get("site") if not errors else None
    return meta.get("id") if isinstance(meta, dict) else None
