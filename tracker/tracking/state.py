"""The estate as it stands, kept up to date one file change at a time.

Each site file keeps its last good state: a file that does not parse, or a change that leaves
its site inconsistent, is reported (an input error) while the site stays as it last was. A file
that loads is diffed against the site's last good state at element level; the graph gives the
circuits the change can affect; only those are re-checked; the new results are compared with the
old ones to find the events.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath

import networkx as nx

from tracker import graph as G
from tracker.checks.site import SiteResult, evaluate_site, explain_circuit
from tracker.loading.errors import InputError
from tracker.loading.estate import (SITE_FILE, STATE_DIR, EstateError, FileResult, _read_text, assemble_site,
                                    _inside, sha256_hex, site_files, site_folders)
from tracker.model import Site
from tracker.tracking import impact
from tracker.tracking.diff import ADDED, REMOVED, Change, diff_file, elements
from tracker.tracking.transitions import INPUT_ERROR, compare


@dataclass
class SiteState:
    folder: str
    site: Site | None = None
    result: SiteResult | None = None


@dataclass
class FileOutcome:
    """What one change of one file did."""

    file: str
    folder: str
    site_id: str | None
    content: bytes | None          # None: the file was deleted
    content_hash: str | None
    valid: bool
    errors: list[InputError] = field(default_factory=list)
    changes: list[Change] = field(default_factory=list)
    events: list[dict] = field(default_factory=list)
    results: list[tuple] = field(default_factory=list)
    rechecked: int = 0             # circuits whose checks were re-run
    first_record: bool = False     # the first record of the file (nothing before it to compare with)


def _order(results: list[FileResult]) -> list[FileResult]:
    return sorted(results, key=lambda r: (PurePosixPath(r.rel).name != SITE_FILE, r.rel))


@dataclass
class FolderSeed:
    """One site folder read, assembled and checked (picklable: it may come from a worker)."""

    folder: str
    good: dict[str, FileResult]
    hashes: dict[str, str]
    errors: dict[str, list]
    site: Site | None = None
    result: SiteResult | None = None
    unloadable: tuple[str, ...] = ()     # files that did not load (their last good state was not at hand)


def seed_folder(folder: str, folder_name: str, files: dict[str, bytes], last_good=None) -> FolderSeed:
    """A folder's files → its last good file results, its site and the site's results."""
    good, hashes, errors, unloadable, now = {}, {}, {}, [], {}
    for rel in sorted(files):
        raw = files[rel]
        digest = sha256_hex(raw)
        hashes[rel] = digest
        fr = _read_text(raw, rel, digest)
        now[rel] = fr
        if fr.errors:
            errors[rel] = list(fr.errors)
            older = last_good(rel) if last_good else None
            if older is None:
                unloadable.append(rel)
                continue
            fr = _read_text(older, rel, sha256_hex(older))
            if fr.errors:
                continue
        good[rel] = fr
    if errors:
        errors = _all_problems(folder_name, folder, now, errors)
    fs = FolderSeed(folder, good, hashes, errors, unloadable=tuple(unloadable))
    sl = assemble_site(folder_name, folder, _order(list(good.values())))
    if sl.site is None:
        if not unloadable:   # (without a file that does not load, what remains says little)
            for e in sl.errors:
                fs.errors.setdefault(e.file, []).append(e)
        return fs
    fs.site, fs.result = sl.site, evaluate_site(sl.site, explain=False)
    return fs


def _all_problems(folder_name: str, folder: str, now: dict[str, FileResult],
                  errors: dict[str, list]) -> dict[str, list]:
    """Every problem of a folder's files as they are now — what `check` reports: a file's own
    errors and, where every file parses, what assembling the site finds too (a reference that
    does not resolve, ...). Each is kept under its own file where that file is at fault, else
    under the first file at fault (whose fix is what clears them)."""
    if not all(fr.parsed for fr in now.values()):
        return errors
    sl = assemble_site(folder_name, folder, _order(list(now.values())))
    first = min(errors)
    out: dict[str, list] = {}
    for e in sl.errors:
        out.setdefault(e.file if e.file in errors else first, []).append(e)
    return out or errors


def _seed_run(job) -> list[FolderSeed]:
    """Worker process: seed a run of folders read from disk."""
    root, run = job
    out = []
    for folder, folder_name, rels in run:
        files = {}
        for rel in rels:
            try:
                files[rel] = (root / rel).read_bytes()
            except OSError:
                continue
        out.append(seed_folder(folder, folder_name, files))
    return out


def seed_in_parallel(state: "EstateState", folders: dict[str, list[str]], jobs: int):
    """FolderSeeds of the given folders (folder -> site files), in worker processes when there
    are enough folders for it to pay; yielded in the folders' order."""
    items = [(f, state.folder_name(f), sorted(rels)) for f, rels in sorted(folders.items())]
    if jobs <= 1 or len(items) < 40:
        yield from _seed_run((state.root, items))
        return
    from tracker.parallel import ordered_results
    size = max(1, min(50, len(items) // (jobs * 8)))
    runs = [(state.root, items[i:i + size]) for i in range(0, len(items), size)]
    for batch in ordered_results(_seed_run, runs, jobs):
        yield from batch


class EstateState:
    def __init__(self, root: Path | str, single_site: bool | None = None):
        self.root = Path(root)
        if single_site is None:
            single_site = (self.root / SITE_FILE).is_file()
        self.single_site = single_site
        self.sites: dict[str, SiteState] = {}        # by folder
        self.good: dict[str, dict[str, FileResult]] = {}   # folder -> rel -> last good file result
        self.hashes: dict[str, str] = {}             # rel -> sha256 of the content last seen
        self.graph = nx.DiGraph()
        self.errors: dict[str, list[InputError]] = {}   # rel -> open input errors
        self.by_id: dict[str, str] = {}              # site id -> folder
        self._id_of: dict[str, str] = {}             # folder -> site id

    # -- where files belong ----------------------------------------------------------------

    def folder_of(self, rel: str) -> str | None:
        """The site folder of a site file (relative path), or None if it is not a site file."""
        p = PurePosixPath(rel)
        if p.suffix != ".yaml" or p.name.startswith("."):
            return None
        parts = p.parts
        if self.single_site:
            return "" if len(parts) == 1 else None
        if len(parts) != 2 or parts[0].startswith(".") or parts[0] == STATE_DIR:
            return None
        return parts[0]

    def folder_name(self, folder: str) -> str:
        return self.root.resolve().name if folder == "" else folder

    def site_results(self) -> list[SiteResult]:
        return [s.result for s in self.sites.values() if s.result is not None]

    def site_by_id(self, site_id: str) -> SiteState | None:
        folder = self.by_id.get(site_id)
        return self.sites.get(folder) if folder is not None else None

    def explained(self, ref: str):
        """The results of one circuit with the working text of every check (the state keeps the
        verdicts and figures of all circuits, the text only of what is shown)."""
        ss = self.site_by_id(ref.split("/", 1)[0])
        if ss is None or ss.result is None or ref not in ss.result.circuits:
            return None
        return explain_circuit(ss.result.circuits[ref])

    def _explain_events(self, events: list[dict], result: SiteResult | None) -> None:
        for e in events:
            r = result.circuits.get(e["ref"]) if result is not None else None
            if r is not None and not e.get("detail"):
                full = explain_circuit(r).check(e["check"])
                if full is not None:
                    e["detail"] = full.detail

    def _place(self, ss: SiteState) -> None:
        self.sites[ss.folder] = ss
        old = self._id_of.get(ss.folder)
        new = ss.site.id if ss.site is not None else None
        if old is not None and old != new and self.by_id.get(old) == ss.folder:
            del self.by_id[old]
        if new is not None:
            self.by_id[new] = ss.folder
            self._id_of[ss.folder] = new
        else:
            self._id_of.pop(ss.folder, None)

    def disk_files(self) -> dict[str, Path]:
        """Every site file on disk now: rel -> path."""
        out = {}
        try:
            single, folders, _ = site_folders(self.root)
        except EstateError:
            return out
        for folder, _rel in folders:
            files, _ = site_files(folder, self.root)   # the loader's rules: no links out of the estate
            for path in files:
                rel = path.relative_to(self.root).as_posix()
                if self.folder_of(rel) is not None:
                    out[rel] = path
        return out

    # -- seeding without outcomes ----------------------------------------------------------

    def seed(self, contents: dict[str, bytes], last_good=None) -> None:
        """Set the state from file contents (rel -> bytes) without recording anything.

        `last_good(rel)` may supply the last good bytes of a file that does not load now.
        """
        by_folder: dict[str, dict[str, bytes]] = {}
        for rel in sorted(contents):
            folder = self.folder_of(rel)
            if folder is not None:
                by_folder.setdefault(folder, {})[rel] = contents[rel]
        for folder, files in by_folder.items():
            self.adopt(seed_folder(folder, self.folder_name(folder), files, last_good))

    def adopt(self, fs: "FolderSeed") -> None:
        """Take a folder seeded (here or in a worker process) into the state."""
        self.hashes.update(fs.hashes)
        for rel, errs in fs.errors.items():
            self.errors.setdefault(rel, []).extend(errs)
        self.good[fs.folder] = fs.good
        ss = self.sites.setdefault(fs.folder, SiteState(fs.folder))
        if fs.site is None:
            return
        if self._id_taken(fs.site.id, fs.folder):
            self.errors.setdefault(fs.site.files[0], []).append(self._id_error(fs.site))
            return
        ss.site, ss.result = fs.site, fs.result
        self._place(ss)
        G.add_site(self.graph, fs.site)

    def _id_taken(self, site_id: str, folder: str) -> bool:
        other = self.site_by_id(site_id)
        return other is not None and other.folder != folder

    def _id_error(self, site: Site) -> InputError:
        other = self.site_by_id(site.id)
        return InputError(site.files[0], 1, 1, f"site id '{site.id}' is already used by "
                                               f"{other.site.files[0]}; site ids must be unique")

    # -- applying changes -----------------------------------------------------------------

    def apply_disk(self, rel: str) -> FileOutcome | None:
        """Re-read one file from disk (or notice it is gone) and apply the change. A link that
        leads out of the estate is not followed: the file counts as absent."""
        path = self.root / rel
        try:
            inside = not path.is_symlink() or _inside(self.root, path)
            raw = path.read_bytes() if inside and path.is_file() else None
        except OSError as exc:
            if rel not in self.hashes:
                return None
            err = InputError(rel, 1, 1, f"cannot be read ({exc.strerror})")
            return self._input_error(rel, self.folder_of(rel), None, None, [err])
        return self.apply_bytes(rel, raw)

    def apply_bytes(self, rel: str, raw: bytes | None) -> FileOutcome | None:
        """Apply new content of one file (None: deleted). None when nothing changed."""
        folder = self.folder_of(rel)
        if folder is None:
            return None
        digest = sha256_hex(raw) if raw is not None else None
        if self.hashes.get(rel) == digest:
            return None
        if digest is None:
            self.hashes.pop(rel, None)
        else:
            self.hashes[rel] = digest
        fr = _read_text(raw, rel, digest) if raw is not None else None
        good = dict(self.good.get(folder, {}))
        if fr is not None and fr.errors:   # every problem at once, as `check` reports them
            errors = _all_problems(self.folder_name(folder), folder, {**good, rel: fr}, {rel: fr.errors})[rel]
            return self._input_error(rel, folder, raw, digest, errors)
        self.errors.pop(rel, None)
        if fr is None:
            good.pop(rel, None)
        else:
            good[rel] = fr
        ss = self.sites.get(folder) or SiteState(folder)
        old_site, old_result = ss.site, ss.result
        if not good:
            self.good.pop(folder, None)
            return self._remove_site(rel, folder, ss)
        sl = assemble_site(self.folder_name(folder), folder, _order(list(good.values())))
        if sl.site is not None and self._id_taken(sl.site.id, folder):
            sl.errors, sl.site = [self._id_error(sl.site)], None
        if sl.site is None:
            if fr is None:   # a deleted file is gone whatever else is wrong
                self.good[folder] = good
            out = self._input_error(rel, folder, raw, digest, sl.errors)
            return out
        new_site = sl.site
        self.good[folder] = good
        if old_site is not None and old_site.id != new_site.id:
            changes = self._whole_site_changes(old_site, None) + self._whole_site_changes(None, new_site)
            old_site, old_result = None, None
        elif old_site is None:
            changes = self._whole_site_changes(None, new_site)
        else:
            changes = diff_file(old_site, new_site, rel)
        recheck = None
        if old_site is not None:
            g_old = self._site_graph_copy(old_site.id)
            G.remove_site(self.graph, old_site.id)
            G.add_site(self.graph, new_site)
            recheck = impact.affected_circuits(changes, new_site.id, g_old, self.graph)
        else:
            if ss.site is not None:
                G.remove_site(self.graph, ss.site.id)
            G.add_site(self.graph, new_site)
        new_result = evaluate_site(new_site, old_result, recheck, explain=False)
        events, results = compare(old_result, new_result)
        self._explain_events(events, new_result)
        ss.site, ss.result = new_site, new_result
        self._place(ss)
        rechecked = len(new_site.circuits) if recheck is None else len(recheck)
        return FileOutcome(rel, folder, new_site.id, raw, digest, True, [], changes, events, results, rechecked)

    def _site_graph_copy(self, site_id: str) -> nx.DiGraph:
        nodes = {site_id} | nx.descendants(self.graph, site_id) if site_id in self.graph else set()
        return self.graph.subgraph(nodes).copy()

    def _whole_site_changes(self, old: Site | None, new: Site | None) -> list[Change]:
        site = old or new
        out = []
        for f in site.files:
            for ref in elements(site, f):
                out.append(Change(ref, REMOVED if old is not None else ADDED))
        return out

    def _remove_site(self, rel: str, folder: str, ss: SiteState) -> FileOutcome:
        old_site, old_result = ss.site, ss.result
        changes = self._whole_site_changes(old_site, None) if old_site is not None else []
        events, results = compare(old_result, None)
        if old_site is not None:
            G.remove_site(self.graph, old_site.id)
            self.by_id.pop(old_site.id, None)
        self._id_of.pop(folder, None)
        self.sites.pop(folder, None)
        site_id = old_site.id if old_site is not None else None
        return FileOutcome(rel, folder, site_id, None, None, True, [], changes, events, results)

    def _input_error(self, rel: str, folder: str | None, raw, digest, errors: list[InputError]) -> FileOutcome:
        self.errors[rel] = errors
        ss = self.sites.get(folder) if folder is not None else None
        site_id = ss.site.id if ss is not None and ss.site is not None else (
            self.folder_name(folder) if folder is not None else None)
        text = "; ".join(str(e) for e in errors[:5]) + (f" (and {len(errors) - 5} more)" if len(errors) > 5 else "")
        event = {"ref": site_id or rel, "check": None, "transition": INPUT_ERROR, "detail": text}
        return FileOutcome(rel, folder or "", site_id, raw, digest, False, errors, [], [event], [])
