"""The estate as it stands, kept up to date one file change at a time.

Each site file keeps its last good state: a file that does not parse, or a change that leaves
its site inconsistent, is reported (an input error) while the site stays as it last was. A file
that loads is diffed against the site's last good state at element level; the graph gives the
circuits the change can affect; only those are re-checked; the new results are compared with the
old ones to find the events.
"""
from __future__ import annotations

import datetime
import os
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path, PurePosixPath

import networkx as nx

from tracker import graph
from tracker.checks.result import FAIL
from tracker.checks.site import SiteResult, evaluate_site, explain_circuit
from tracker.loading.discover import is_site_folder, not_a_file, read_regular, site_files
from tracker.loading.errors import InputError
from tracker.loading.estate import (SITE_FILE, STATE_DIR, FileResult, SiteLoad, assemble_site, duplicate_site_id,
                                    estate_files, inside, read_content, sha256_hex)
from tracker.inspection.events import deadline_events
from tracker.model import Site
from tracker.parallel import each_in_runs
from tracker.tracking import impact
from tracker.tracking.diff import ADDED, REMOVED, Change, diff_file, elements
from tracker.events import input_error_event
from tracker.tracking.outcome import FileOutcome
from tracker.tracking.warm import SiteBrief, deadline_brief
from tracker.tracking.warnings import note_warnings
from tracker.tracking.transitions import compare

__all__ = ["EstateState", "FileOutcome", "FolderSeed", "SiteState", "seed_folder", "seed_in_parallel"]


class SiteState:
    """One site folder's site and results. A folder taken at a start from its brief
    (tracker.tracking.warm) holds only the brief until something needs its site or results: it
    is then read through from the content the brief names (`wake`)."""

    __slots__ = ("folder", "_site", "_result", "brief", "_wake")

    def __init__(self, folder: str, site: Site | None = None, result: SiteResult | None = None,
                 brief: SiteBrief | None = None, wake: Callable[["SiteState"], None] | None = None):
        self.folder, self._site, self._result, self.brief, self._wake = folder, site, result, brief, wake

    @property
    def site(self) -> Site | None:
        if self.brief is not None:
            self._wake(self)
        return self._site

    @site.setter
    def site(self, value: Site | None) -> None:
        self._site = value

    @property
    def result(self) -> SiteResult | None:
        if self.brief is not None:
            self._wake(self)
        return self._result

    @result.setter
    def result(self, value: SiteResult | None) -> None:
        self._result = value

    @property
    def site_id(self) -> str | None:
        """The site's id, without reading a site held as a brief."""
        if self.brief is not None:
            return self.brief.site_id
        return self._site.id if self._site is not None else None

    @property
    def asleep(self) -> bool:
        """Held as a brief only (nothing read yet)."""
        return self.brief is not None


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
    """A folder's files → its last good file results, its site and the site's results.

    `last_good(rel)` may give the last good bytes of a file that does not load now; the site is
    then assembled with those in its place.
    """
    now = {rel: read_content(raw, rel) for rel, raw in sorted(files.items())}
    hashes = {rel: result.sha256 for rel, result in now.items()}
    bad = {rel: list(result.errors) for rel, result in now.items() if result.errors}
    good, unloadable, errors = now, [], {}
    if bad:
        errors = _problems_by_file(folder_name, folder, now, bad)
        good = {rel: result for rel, result in now.items() if rel not in bad}
        for rel in bad:
            older = last_good(rel) if last_good else None
            if older is None:
                unloadable.append(rel)
                continue
            result = read_content(older, rel)
            if not result.errors:
                good[rel] = result
    loaded = assemble_site(folder_name, folder, list(good.values()))
    seed = FolderSeed(folder, good, hashes, errors, unloadable=tuple(unloadable))
    if loaded.site is None:
        if not unloadable:   # (without a file that does not load, what remains says little)
            for e in loaded.errors:
                seed.errors.setdefault(e.file, []).append(e)
        return seed
    seed.site, seed.result = loaded.site, evaluate_site(loaded.site, explain=False)
    return seed


def _problems_by_file(folder_name: str, folder: str, results: dict[str, FileResult],
                      bad: dict[str, list]) -> dict[str, list]:
    """Every problem of a folder's files as they are now — what `check` reports: a file's own
    errors and, where every file parses, what assembling the site finds too (a reference that
    does not resolve, ...). Each is kept under its own file where that file is at fault, else
    under the first file at fault (whose fix is what clears them)."""
    if not all(result.parsed for result in results.values()):
        return bad
    first = min(bad)
    out: dict[str, list] = {}
    for e in assemble_site(folder_name, folder, list(results.values())).errors:
        out.setdefault(e.file if e.file in bad else first, []).append(e)
    return out or bad


def _seed_from_disk(root: Path, item: tuple) -> FolderSeed:
    """Read one folder's files from disk and seed it (here or in a worker process)."""
    folder, folder_name, rels = item
    files = {}
    for rel in rels:
        try:
            files[rel] = read_regular(root / rel)
        except OSError:
            continue
    return seed_folder(folder, folder_name, files)


def seed_in_parallel(state: "EstateState", folders: dict[str, list[str]], jobs: int):
    """FolderSeeds of the given folders (folder -> site files), in worker processes when there
    are enough folders for it to pay; yielded in the folders' order."""
    items = [(f, state.folder_name(f), sorted(rels)) for f, rels in sorted(folders.items())]
    yield from each_in_runs(_seed_from_disk, items, state.root, jobs)


class EstateState:
    def __init__(self, root: Path | str, single_site: bool | None = None):
        self.root = Path(root)
        if single_site is None:
            single_site = is_site_folder(self.root)     # as the loader decides (site_folders)
        self.single_site = single_site
        self.sites: dict[str, SiteState] = {}        # by folder
        self.good: dict[str, dict[str, FileResult]] = {}   # folder -> rel -> last good file result
        self.hashes: dict[str, str] = {}             # rel -> sha256 of the content last seen
        self.graph = nx.DiGraph()
        self.errors: dict[str, list[InputError]] = {}   # rel -> open input errors
        self.by_id: dict[str, str] = {}              # site id -> folder
        self._id_of: dict[str, str] = {}             # folder -> site id
        self.today = datetime.date.today              # the day deadlines are judged on (tests set it)
        # (file, sha256) -> that content, for reading a site held as a brief (startup sets it:
        # the file on disk where it still has that content, else the history's copy)
        self.recorded_content: Callable[[str, str], bytes | None] | None = None

    # -- where files belong ----------------------------------------------------------------

    def folder_of(self, rel: str) -> str | None:
        """The site folder of a site file (relative path), or None if it is not a site file."""
        if not ("//" in rel or "/./" in rel or rel.startswith(("/", "./")) or rel.endswith("/")):
            # a plain relative path (as every caller gives): the same answer without PurePosixPath,
            # which a start asks of every file several times
            parts = rel.split("/")
            name = parts[-1]
            if not name.endswith(".yaml") or name.startswith(".") or name == ".yaml":
                return None
            if self.single_site:
                return "" if len(parts) == 1 else None
            if len(parts) != 2 or parts[0].startswith(".") or parts[0] == STATE_DIR:
                return None
            return parts[0]
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
        """Every site's results (a site held as a brief is read through first)."""
        return [s.result for s in self.sites.values() if s.result is not None]

    def counts(self) -> tuple[int, int, int]:
        """(sites, circuits, failing circuits) of the sites that load, without reading a site
        held as a brief."""
        sites = circuits = failing = 0
        for s in self.sites.values():
            if s.brief is not None:
                sites, circuits, failing = sites + 1, circuits + s.brief.circuits, failing + s.brief.failing
            elif s.site is not None:
                sites, circuits = sites + 1, circuits + len(s.site.circuits)
                if s.result is not None:
                    failing += sum(1 for r in s.result.circuits.values() if r.status == FAIL)
        return sites, circuits, failing

    def warnings(self) -> list:
        """Every warning of the files as the state holds them (LoadWarning), unsorted."""
        out = [w for files in self.good.values() for f in files.values() for w in f.warnings]
        for s in self.sites.values():
            if s.brief is not None:
                out.extend(s.brief.warnings)
        return out

    # -- sites held as briefs ----------------------------------------------------------------

    def adopt_brief(self, folder: str, brief: SiteBrief) -> bool:
        """Take a clean folder from its brief (tracker.tracking.warm) without reading it; False
        (nothing taken) where another folder already holds its site id."""
        if self._id_taken(brief.site_id, folder):
            return False
        self.hashes.update(brief.hashes)
        self.good.pop(folder, None)
        self._place(SiteState(folder, brief=brief, wake=self._wake))
        return True

    def _wake(self, site_state: SiteState) -> None:
        """Read a site held as a brief through, from the content its brief names."""
        contents = {}
        for rel, digest in site_state.brief.hashes:
            raw = self.recorded_content(rel, digest) if self.recorded_content is not None else None
            if raw is None or sha256_hex(raw) != digest:
                raise RuntimeError(f"the content of {rel} last checked ({digest[:12]}) is neither on disk "
                                   "nor in the history")
            contents[rel] = raw
        self._awake(site_state, seed_folder(site_state.folder, self.folder_name(site_state.folder), contents))

    def _awake(self, site_state: SiteState, seed: FolderSeed) -> None:
        brief = site_state.brief
        if seed.site is None or seed.errors or seed.site.id != brief.site_id or seed.hashes != brief.files():
            raise RuntimeError(f"site folder {site_state.folder!r} no longer reads as its brief says")
        site_state.brief = None
        self.good[site_state.folder] = seed.good
        site_state.site, site_state.result = seed.site, seed.result
        graph.add_site(self.graph, seed.site)

    def wake_all(self, jobs: int = 1) -> None:
        """Read every site held as a brief through (in worker processes for many): for a reader
        of every site's results (the terminal UI)."""
        asleep = {s.folder: s for s in self.sites.values() if s.brief is not None}
        if not asleep:
            return
        folders = {f: [rel for rel, _ in s.brief.hashes] for f, s in asleep.items()}
        for seed in seed_in_parallel(self, folders, jobs):
            site_state = asleep[seed.folder]
            if seed.hashes == site_state.brief.files():
                self._awake(site_state, seed)
            else:   # changed on disk since: from the content the brief names
                self._wake(site_state)

    def briefs(self) -> dict[str, SiteBrief]:
        """folder -> brief of every folder whose files all load and whose site stands."""
        errors = {self.folder_of(rel) for rel in self.errors}
        day = self.today()
        files: dict[str, set[str]] = {}
        for rel in self.hashes:
            files.setdefault(self.folder_of(rel), set()).add(rel)
        out = {}
        for folder, s in self.sites.items():
            if s.brief is not None:
                out[folder] = s.brief
                continue
            good = self.good.get(folder)
            site, result = s.site, s.result
            if (folder in errors or site is None or result is None or not good or set(good) != files.get(folder)
                    or any(self.hashes.get(rel) != r.sha256 for rel, r in good.items())):
                continue
            out[folder] = SiteBrief(site.id, tuple((rel, good[rel].sha256) for rel in sorted(good)),
                                    len(site.circuits),
                                    sum(1 for r in result.circuits.values() if r.status == FAIL),
                                    tuple(w for rel in sorted(good) for w in good[rel].warnings),
                                    **deadline_brief(site, result.notification, day))
        return out

    def site_by_id(self, site_id: str) -> SiteState | None:
        folder = self.by_id.get(site_id)
        return self.sites.get(folder) if folder is not None else None

    def explained(self, ref: str):
        """The results of one circuit with the working text of every check (the state keeps the
        verdicts and figures of all circuits, the text only of what is shown)."""
        site_state = self.site_by_id(ref.split("/", 1)[0])
        if site_state is None or site_state.result is None or ref not in site_state.result.circuits:
            return None
        return explain_circuit(site_state.result.circuits[ref])

    def explain_events(self, events: list[dict], result: SiteResult | None) -> None:
        """Give each event the working text of its check (the state keeps no text): each circuit
        with events is worded once, however many of its checks changed."""
        worded: dict[str, object] = {}
        for e in events:
            r = result.circuits.get(e["ref"]) if result is not None else None
            if r is not None and not e.get("detail"):
                if e["ref"] not in worded:
                    worded[e["ref"]] = explain_circuit(r)
                full = worded[e["ref"]].check(e["check"])
                if full is not None:
                    e["detail"] = full.detail

    def _place(self, site_state: SiteState) -> None:
        folder = site_state.folder
        self.sites[folder] = site_state
        old = self._id_of.get(folder)
        new = site_state.site_id
        if old is not None and old != new and self.by_id.get(old) == folder:
            del self.by_id[old]
        if new is not None:
            self.by_id[new] = folder
            self._id_of[folder] = new
        else:
            self._id_of.pop(folder, None)

    def disk_files(self) -> dict[str, Path]:
        """Every site file on disk now (rel -> path), found by the loader's rules."""
        return {rel: path for rel, path in estate_files(self.root).items() if self.folder_of(rel) is not None}

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

    def adopt(self, seed: FolderSeed) -> None:
        """Take a folder seeded (here or in a worker process) into the state."""
        self.hashes.update(seed.hashes)
        for rel, errors in seed.errors.items():
            self.errors.setdefault(rel, []).extend(errors)
        self.good[seed.folder] = seed.good
        site_state = self.sites.setdefault(seed.folder, SiteState(seed.folder))
        if seed.site is None:
            return
        if self._id_taken(seed.site.id, seed.folder):
            self.errors.setdefault(seed.site.files[0], []).append(self._id_error(seed.site))
            return
        site_state.site, site_state.result = seed.site, seed.result
        self._place(site_state)
        graph.add_site(self.graph, seed.site)

    def _id_taken(self, site_id: str, folder: str) -> bool:
        other = self.site_by_id(site_id)
        return other is not None and other.folder != folder

    def _id_error(self, site: Site) -> InputError:
        return duplicate_site_id(site.id, site.files[0], self.site_by_id(site.id).site.files[0])

    # -- applying changes -----------------------------------------------------------------

    def apply_disk(self, rel: str, settle: Callable[[], None] | None = None) -> FileOutcome | None:
        """Re-read one file from disk (or notice it is gone) and apply the change. A link that
        leads out of the estate is not followed: the file counts as absent.

        `settle` (the watcher's): content that does not load may be a file caught half-written,
        so `settle` is waited and the file read once more before its problems are recorded; only
        content read the same twice is called an input error."""
        path = self.root / rel
        what = not_a_file(path) if self.folder_of(rel) is not None else None
        if what is not None and (not path.is_symlink() or inside(self.root, path)):
            # a FIFO, a folder or a dangling link under a site file's name: never opened, said
            err = InputError(rel, 1, 1, f"is {what}, not a site file")
            if self.errors.get(rel) == [err]:
                return None
            self.hashes.pop(rel, None)     # whatever comes back under the name is news
            return self._input_error(rel, self.folder_of(rel), None, None, [err])
        try:
            raw = self._read_disk(rel, path)
        except OSError as exc:
            if rel not in self.hashes:
                return None
            err = InputError(rel, 1, 1, f"cannot be read ({exc.strerror})")
            return self._input_error(rel, self.folder_of(rel), None, None, [err])
        again = None
        if settle is not None:
            def again():
                settle()
                try:
                    return self._read_disk(rel, path)
                except OSError:
                    return raw
        return self.apply_bytes(rel, raw, again, alongside=self.folder_on_disk(rel))

    def folder_on_disk(self, rel: str) -> dict[str, bytes]:
        """The other site files of `rel`'s folder as they are on disk now (rel -> bytes)."""
        folder = self.folder_of(rel)
        out: dict[str, bytes] = {}
        if folder is None:
            return out
        where = self.root / folder if folder else self.root
        for path in site_files(where, self.root, regular_only=True)[0]:
            other = path.relative_to(self.root).as_posix()
            if other == rel or self.folder_of(other) != folder:
                continue
            try:
                out[other] = read_regular(path)
            except OSError:
                continue
        return out

    def _read_disk(self, rel: str, path: Path) -> bytes | None:
        """The file's bytes; None when it is gone (or a link out of the estate). A file that is
        there but cannot be read (its folder or itself made unreadable) raises OSError: it is an
        input error, not a deletion."""
        try:
            os.lstat(path)
        except FileNotFoundError:
            return None
        if path.is_symlink() and not inside(self.root, path):
            return None
        try:
            return read_regular(path)
        except FileNotFoundError:
            return None

    def apply_bytes(self, rel: str, raw: bytes | None, read_again: Callable[[], bytes | None] | None = None,
                    alongside: dict[str, bytes] | None = None) -> FileOutcome | None:
        """Apply new content of one file (None: deleted). None when nothing changed.

        `alongside`: the other files of the site as they are now (rel -> bytes). One change can
        span files (a board re-fed: a new sub-main in one file, `fed_by` in another), so a site
        is evaluated from its files as they are, not from each file's last good state: every
        other file that differs from the state held and loads on its own is taken with this one,
        and the outcome covers them all (`along`). If the site does not assemble that way but
        does with this file alone, the others wait for their own saves (a later save of theirs
        may be what breaks it).

        `read_again`: where the content does not load, the file's content read once more; if it
        differs (the first read caught a save half-done), the new content is applied instead."""
        folder = self.folder_of(rel)
        if folder is None:
            return None
        digest = sha256_hex(raw) if raw is not None else None
        if self.hashes.get(rel) == digest:
            return None
        asleep = self.sites.get(folder)
        if asleep is not None and asleep.brief is not None:
            self._wake(asleep)
        result = read_content(raw, rel, digest) if raw is not None else None
        if result is not None and result.errors and read_again is not None:
            later = read_again()
            if later != raw:
                return self.apply_bytes(rel, later, alongside=alongside)
        if digest is None:
            self.hashes.pop(rel, None)
        else:
            self.hashes[rel] = digest
        good = dict(self.good.get(folder, {}))
        held = good.get(rel)
        if result is not None and result.errors:   # every problem at once, as `check` reports them
            errors = _problems_by_file(self.folder_name(folder), folder, {**good, rel: result}, {rel: result.errors})
            return self._input_error(rel, folder, raw, digest, errors[rel])
        had_errors = rel in self.errors
        if result is None:
            good.pop(rel, None)
        else:
            good[rel] = result
        site_state = self.sites.get(folder) or SiteState(folder)
        if not good:
            self.errors.pop(rel, None)
            self.good.pop(folder, None)
            return self._remove_site(rel, folder, site_state)
        loaded, along = self._assemble_along(folder, good, alongside or {})
        if loaded.site is None:
            if result is None:   # a deleted file is gone whatever else is wrong
                self.good[folder] = good
            return self._input_error(rel, folder, raw, digest, loaded.errors)
        self.errors.pop(rel, None)
        for other, (other_raw, other_result) in along.items():
            good[other] = other_result
        self.good[folder] = good
        outcome = self._take_site(rel, raw, digest, site_state, loaded.site, along)
        outcome.loads_again = had_errors and result is not None
        if result is not None:
            note_warnings(outcome, result.warnings, held.warnings if held is not None else ())
        return outcome

    def _assemble_along(self, folder: str, good: dict[str, FileResult], alongside: dict[str, bytes]):
        """(the folder's site assembled, the other files taken with it): with every other file of
        `alongside` that was saved too and loads on its own; if the site does not assemble so, with
        this file alone (the others wait for their own saves), the errors being those of the files
        as they are on disk."""
        along = self._saved_alongside(good, alongside)
        loaded = self._assemble(folder, {**good, **{f: r for f, (_, r) in along.items()}})
        if loaded.site is None and along:
            as_on_disk = loaded.errors          # what `check` would say of the files as they are
            along = {}
            loaded = self._assemble(folder, good)
            if loaded.site is None:
                loaded.errors = as_on_disk
        return loaded, along

    def _saved_alongside(self, good: dict[str, FileResult], alongside: dict[str, bytes]) -> dict[str, tuple]:
        """The files of `alongside` whose content is not the one held and loads on its own:
        rel -> (bytes, result). A file that does not load on its own is left to its own save
        (which reports it); one removed is too."""
        out = {}
        for other, raw in sorted(alongside.items()):
            digest = sha256_hex(raw)
            held = good.get(other)
            if held is not None and held.sha256 == digest:
                continue
            result = read_content(raw, other, digest)
            if not result.errors:
                out[other] = (raw, result)
        return out

    def _assemble(self, folder: str, good: dict[str, FileResult]) -> SiteLoad:
        """The folder's site from its files' last good results; a site id another folder holds
        is an error."""
        loaded = assemble_site(self.folder_name(folder), folder, list(good.values()))
        if loaded.site is not None and self._id_taken(loaded.site.id, folder):
            loaded.errors, loaded.site = [self._id_error(loaded.site)], None
        return loaded

    def _take_site(self, rel: str, raw: bytes | None, digest: str | None, site_state: SiteState,
                   new_site: Site, along: dict[str, tuple] | None = None) -> FileOutcome:
        """Put a folder's newly assembled site in place of its old one: diff, re-check what the
        change can affect, compare the results. `along`: other files taken with this one
        (rel -> (bytes, result)); each gets an outcome of its own element changes."""
        along = along or {}
        old_site, old_result = site_state.site, site_state.result
        companions = []
        if old_site is not None and old_site.id != new_site.id:
            changes = self._whole_site_changes(old_site, None) + self._whole_site_changes(None, new_site)
            old_site, old_result = None, None
        elif old_site is None:
            changes = self._whole_site_changes(None, new_site)
        else:
            changes = diff_file(old_site, new_site, rel)
        for other, (other_raw, other_result) in sorted(along.items()):
            other_changes = diff_file(site_state.site, new_site, other) if old_site is not None else []
            companion = FileOutcome(other, site_state.folder, new_site.id, other_raw, other_result.sha256, True, [],
                                    other_changes)
            companion.loads_again = self.errors.pop(other, None) is not None
            self.hashes[other] = other_result.sha256
            companions.append(companion)
        all_changes = changes + [c for o in companions for c in o.changes]
        recheck = None
        if old_site is not None:
            graph_before = self._site_graph_copy(old_site.id)
            graph.remove_site(self.graph, old_site.id)
            graph.add_site(self.graph, new_site)
            recheck = impact.affected_circuits(all_changes, new_site.id, graph_before, self.graph)
        else:
            if site_state.site is not None:
                graph.remove_site(self.graph, site_state.site.id)
            graph.add_site(self.graph, new_site)
        new_result = evaluate_site(new_site, old_result, recheck, explain=False)
        events, results = compare(old_result, new_result)
        self.explain_events(events, new_result)
        events += deadline_events(old_site, new_site, self.today(),
                                  old_result.notification if old_result is not None else None,
                                  new_result.notification)
        site_state.site, site_state.result = new_site, new_result
        self._place(site_state)
        rechecked = len(new_site.circuits) if recheck is None else len(recheck)
        return FileOutcome(rel, site_state.folder, new_site.id, raw, digest, True, [], changes, events, results,
                           rechecked, along=companions)

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

    def _remove_site(self, rel: str, folder: str, site_state: SiteState) -> FileOutcome:
        old_site, old_result = site_state.site, site_state.result
        changes = self._whole_site_changes(old_site, None) if old_site is not None else []
        events, results = compare(old_result, None)
        if old_site is not None:
            graph.remove_site(self.graph, old_site.id)
            self.by_id.pop(old_site.id, None)
        self._id_of.pop(folder, None)
        self.sites.pop(folder, None)
        site_id = old_site.id if old_site is not None else None
        return FileOutcome(rel, folder, site_id, None, None, True, [], changes, events, results)

    def _input_error(self, rel: str, folder: str | None, raw, digest, errors: list[InputError]) -> FileOutcome:
        self.errors[rel] = errors
        site_state = self.sites.get(folder) if folder is not None else None
        site_id = site_state.site.id if site_state is not None and site_state.site is not None else (
            self.folder_name(folder) if folder is not None else None)
        text = "; ".join(str(e) for e in errors[:5]) + (f" (and {len(errors) - 5} more)" if len(errors) > 5 else "")
        event = input_error_event(site_id or rel, text)
        return FileOutcome(rel, folder or "", site_id, raw, digest, False, errors, [], [event], [])
