"""`izwatch report PATH (--site ID | --all-sites) [--format html|csv|json] -o FILE [--since DATE] [--db FILE]`.

Writes the landlord's report of one site to FILE (`-o -`: standard output), or with
`--all-sites` one report per site and an index into the folder FILE. Nothing else is written:
the history is only read. Exit 0: written; 2: bad input (nothing written for that site).
"""
from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path

from tracker.cli import EXIT_INPUT, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, disk_full, fail, folder_of_site
from tracker.commands.history import DATE
from tracker.output.terminal_text import clean
from tracker.progress import Progress
from tracker.history import history_location
from tracker.loading import load_site
from tracker.loading.estate import EstateError, duplicate_site_id, inside, site_folders
from tracker.loading.discover import split_problems


def _renderers(fmt: str):
    from tracker.report import csv_rows, html_page, json_doc
    module = {"html": html_page, "csv": csv_rows, "json": json_doc}[fmt]
    return module.render, module.render_index


def _since(text: str | None) -> str | None:
    if text is None:
        return None
    if not DATE.fullmatch(text):
        raise CommandError(f"--since {text!r}: give a date as YYYY-MM-DD (or YYYY-MM-DDTHH:MM)")
    return text.replace(" ", "T")


class _Protected:
    """What a report must never be written over: every site file of the estate and the history
    with its companions (-wal, -shm, -journal), known by device and inode (a hard link or a
    symbolic link to one is the same file) and by path (a companion not made yet)."""

    def __init__(self, root: Path, db: Path | str):
        self.root = root
        self.ids: set[tuple[int, int]] = set()
        self.paths: set[Path] = set()
        # a str is a server's connection string: no file of the history to protect
        files = [] if isinstance(db, str) else [db.with_name(db.name + tail) for tail in ("", "-wal", "-shm", "-journal")]
        try:
            _, folders, _ = site_folders(root)
        except EstateError:
            folders = []
        for folder, _rel in folders:
            files += sorted(folder.glob("*.yaml"))
        for f in files:
            self.paths.add(_where(f))
            try:
                st = os.stat(f)
            except OSError:
                continue
            self.ids.add((st.st_dev, st.st_ino))

    def check(self, target: Path) -> None:
        refuse = _where(target) in self.paths
        for stat in (os.stat, os.lstat):
            try:
                st = stat(target)
            except OSError:
                continue
            refuse |= (st.st_dev, st.st_ino) in self.ids
        if refuse:
            raise CommandError(f"-o {target}: that is a site file or the history (or one of its companion "
                               "files); give another file name")
        if target.suffix.lower() in (".yaml", ".yml") and inside(self.root, _where(target)):
            raise CommandError(f"-o {target}: a .yaml file in the estate would be read as a site file; "
                               "give another file name")


def _where(path: Path) -> Path:
    """The path with its folder resolved but not its last part (a link there is not followed)."""
    try:
        return path.absolute().parent.resolve() / path.name
    except OSError:
        return path.absolute()


def _write(target: Path, text: str) -> None:
    """Write a report: into a temporary file beside `target`, then renamed over it. A link at
    `target` is replaced, never followed; the file gets the usual permissions (the umask's)."""
    data = text.encode("utf-8")
    try:
        if target.is_dir() and not target.is_symlink():
            raise CommandError(f"cannot write {target}: it is a folder")
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=str(target.absolute().parent))
    except OSError as exc:
        raise CommandError(f"cannot write {target}: {exc.strerror or exc}") from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, target)
    except OSError as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if disk_full(exc):
            raise CommandError(f"cannot write {target}: disk full") from None
        raise CommandError(f"cannot write {target}: {exc.strerror or exc}") from None


def _print_problems(problems) -> None:
    for p in problems:
        print(clean(p), file=sys.stderr)


def _one_site(root: Path, args, since, db: Path) -> int:
    from tracker.report import gather
    rel = folder_of_site(root, args.site)
    loaded = load_site(root / rel if rel else root, rel, root)
    _print_problems(loaded.warnings)
    if loaded.site is None:
        _print_problems(loaded.errors)
        raise CommandError(f"the files of site '{args.site}' do not load (errors above): no report written")
    if loaded.site.id != args.site:
        raise CommandError(f"no site '{args.site}' in {root} (this folder holds site '{loaded.site.id}')")
    render, _ = _renderers(args.format)
    doc = gather.build(loaded.site, loaded.files, db, since=since, warnings=loaded.warnings)
    text = render(doc)
    if args.output == "-":
        sys.stdout.write(text)
        return EXIT_OK
    target = Path(args.output)
    _Protected(root, db).check(target)
    _write(target, text)
    print(f"report of {args.site} written to {target} ({args.format}; history: {doc['verification']['state']})",
          file=sys.stderr)
    return EXIT_OK


def _all_sites(root: Path, args, since, db: Path) -> int:
    """One page per site, each written as soon as it is rendered (by worker processes, site by
    site), and the index: only the index's rows are kept, never the estate or the pages."""
    from tracker.parallel import each_in_runs
    from tracker.report import gather
    if args.output == "-":
        raise CommandError("--all-sites writes a folder: give -o FOLDER")
    out = Path(args.output)
    try:
        single, folders, problems = site_folders(root)
    except EstateError as exc:
        raise CommandError(str(exc)) from None
    top_errors, top_warnings = split_problems(problems)
    _print_problems(top_warnings)
    _print_problems(top_errors)
    protected = _Protected(root, db)
    if out.exists() and not out.is_dir():
        protected.check(out)
        raise CommandError(f"-o {out}: not a folder (--all-sites writes one file per site and an index into it)")
    suffix = f".{args.format}"
    if out.is_dir():     # a page would replace what is there: nothing protected may be there
        for entry in sorted(out.iterdir()):
            if entry.name.endswith(suffix):
                protected.check(entry)
    protected.check(out / f"index{suffix}")
    try:
        out.mkdir(exist_ok=True)
    except OSError as exc:
        raise CommandError(f"cannot make the folder {out}: {exc.strerror or exc}") from None
    # The chain verified once, here; this connection is closed after every worker's, so that the
    # last one to close (which removes SQLite's -wal/-shm companions) is always this one.
    reader = gather.HistoryReader(db, scoped=True)
    checked = reader.checked()
    shared = _PageJob(root, str(db), args.format, since, protected, out, checked)
    items = [(n, str(folder), rel) for n, (folder, rel) in enumerate(folders)]
    rows, failed, errors, seen, verification = [], [], list(top_errors), {}, None
    progress = Progress(len(items), "writing reports")
    staged: list[Path] = []
    try:
        for result in each_in_runs(_site_page, items, shared, _jobs(args, len(items))):
            progress.advance()
            _print_problems(result["warnings"])
            _print_problems(result["errors"])
            errors += result["errors"]
            if result["row"] is None:
                failed.append((result["rel"] or root.name, result["errors"]))
                continue
            page = Path(result["staged"])
            staged.append(page)
            site_id, first = result["row"]["id"], result["first_file"]
            if site_id in seen:      # site ids are unique across an estate: the first keeps its page
                dup = duplicate_site_id(site_id, first, seen[site_id])
                _print_problems([dup])
                errors.append(dup)
                failed.append((result["rel"] or root.name, [dup]))
                page.unlink(missing_ok=True)
                continue
            seen[site_id] = first
            target = out / result["row"]["report"]
            protected.check(target)
            try:
                os.replace(page, target)
            except OSError as exc:
                raise CommandError(f"cannot write {target}: {exc.strerror or exc}") from None
            rows.append(result["row"])
            verification = verification or result["verification"]
    finally:
        progress.close()
        _close_reader()      # the pages worked in this process
        reader.close()
        for page in staged:
            if page.exists():
                page.unlink(missing_ok=True)
    index = gather.index_of(rows, failed, str(root), verification=verification)
    _write(out / f"index{suffix}", _renderers(args.format)[1](index))
    print(f"{len(rows)} report{'s' if len(rows) != 1 else ''} and index{suffix} written to {out}"
          + (f"; {len(failed)} site(s) did not load (listed in the index)" if failed else ""), file=sys.stderr)
    return EXIT_INPUT if errors else EXIT_OK


def _jobs(args, items: int) -> int:
    """Worker processes for --all-sites: --jobs, else one per core."""
    return getattr(args, "jobs", 0) or os.cpu_count() or 1


class _PageJob:
    """What every worker of --all-sites needs, sent once (picklable)."""

    def __init__(self, root: Path, db: str, fmt: str, since, protected: _Protected, out: Path, checked: dict):
        self.root, self.db, self.fmt, self.since = root, db, fmt, since
        self.protected, self.out, self.checked = protected, out, checked


_READER = None   # a worker's own reader of the history (query only), opened at its first site


def _reader(job: _PageJob):
    global _READER
    if _READER is None or _READER.db != history_location(job.db):
        import multiprocessing
        from multiprocessing.util import Finalize
        from tracker.report import gather
        _close_reader()
        _READER = gather.HistoryReader(history_location(job.db), scoped=True, checked=job.checked)
        if multiprocessing.parent_process() is not None:
            # a worker: closed as it ends, so that SQLite removes its -wal/-shm companions
            Finalize(None, _close_reader, exitpriority=10)
    return _READER


def _close_reader() -> None:
    global _READER
    if _READER is not None:
        _READER.close()
        _READER = None


def _site_page(job: _PageJob, item) -> dict:
    """One site folder: loaded, its report built and rendered, and written under a staging name in
    the output folder (the parent renames it into place); what the index needs is returned."""
    from tracker.report import gather
    n, folder, rel = item
    loaded = load_site(Path(folder), rel, job.root)
    out = {"rel": rel, "warnings": loaded.warnings, "errors": loaded.errors, "row": None, "staged": None,
           "first_file": None, "verification": None}
    if loaded.site is None:
        return out
    render = _renderers(job.fmt)[0]
    doc = gather.build(loaded.site, loaded.files, job.db, since=job.since, warnings=loaded.warnings,
                       reader=_reader(job))
    name = f"{loaded.site.id}.{job.fmt}"
    staged = job.out / f".{n:06d}.{name}.part"
    job.protected.check(staged)
    _write(staged, render(doc))
    out.update(row=gather.index_row(doc, name), staged=str(staged), first_file=loaded.site.files[0],
               verification=doc["verification"])
    return out


def run(args) -> int:
    try:
        root = check_root(args.path)
        since = _since(args.since)
        db = db_path(args)
        if args.all_sites:
            return _all_sites(root, args, since, db)
        return _one_site(root, args, since, db)
    except CommandError as exc:
        return fail(exc)
