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
from tracker.loading import load_estate, load_site
from tracker.loading.estate import EstateError, inside, site_folders


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
    from tracker.report import gather
    if args.output == "-":
        raise CommandError("--all-sites writes a folder: give -o FOLDER")
    out = Path(args.output)
    estate = load_estate(root)
    _print_problems(estate.warnings)
    _print_problems(estate.errors)
    protected = _Protected(root, db)
    if out.exists() and not out.is_dir():
        protected.check(out)
        raise CommandError(f"-o {out}: not a folder (--all-sites writes one file per site and an index into it)")
    render, render_index = _renderers(args.format)
    pages = []
    reader = gather.HistoryReader(db)   # the history read once for every site
    progress = Progress(len(estate.sites), "writing reports")
    try:
        for site in estate.sites.values():
            doc = gather.build(site, estate.loads[site.folder].files, db, since=since,
                               warnings=[warning for warning in estate.warnings if warning.file.startswith(site.folder)], reader=reader)
            pages.append((doc, f"{site.id}.{args.format}", render(doc)))
            progress.advance()
    finally:
        reader.close()
        progress.close()
    loaded_folders = {s.folder for s in estate.sites.values()}
    failed = [(folder or root.name, loaded.errors or [e for e in estate.errors if e.file.startswith(folder)])
              for folder, loaded in estate.loads.items() if folder not in loaded_folders]
    index = gather.index([(doc, name) for doc, name, _ in pages], failed, str(root))
    try:
        out.mkdir(exist_ok=True)
    except OSError as exc:
        raise CommandError(f"cannot make the folder {out}: {exc.strerror or exc}") from None
    for _, name, _text in pages:
        protected.check(out / name)
    protected.check(out / f"index.{args.format}")
    for _, name, text in pages:
        _write(out / name, text)
    _write(out / f"index.{args.format}", render_index(index))
    print(f"{len(pages)} report{'s' if len(pages) != 1 else ''} and index.{args.format} written to {out}"
          + (f"; {len(failed)} site(s) did not load (listed in the index)" if failed else ""), file=sys.stderr)
    return EXIT_INPUT if estate.errors else EXIT_OK


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
