"""`izwatch report PATH (--site ID | --all-sites) [--format html|csv|json] -o FILE [--since DATE] [--db FILE]`.

Writes the landlord's report of one site to FILE (`-o -`: standard output), or with
`--all-sites` one report per site and an index into the folder FILE. Nothing else is written:
the history is only read. Exit 0: written; 2: bad input (nothing written for that site).
"""
from __future__ import annotations

import sys
from pathlib import Path

from tracker.cli import EXIT_INPUT, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, fail, folder_of_site
from tracker.commands.history import DATE
from tracker.progress import Progress
from tracker.loading import load_estate, load_site

FORMATS = ("html", "csv", "json")


def _renderers(fmt: str):
    from tracker.report import csv_rows, html_page, json_doc
    module = {"html": html_page, "csv": csv_rows, "json": json_doc}[fmt]
    return module.render, module.render_index


def _since(text: str | None) -> str | None:
    if text is None:
        return None
    if not DATE.match(text):
        raise CommandError(f"--since {text!r}: give a date as YYYY-MM-DD (or YYYY-MM-DDTHH:MM)")
    return text.replace(" ", "T")


def _guard(target: Path, protected: set[Path]) -> None:
    """Never let a report overwrite a site file or the history."""
    try:
        resolved = target.resolve()
    except OSError:
        return
    if resolved in protected:
        raise CommandError(f"-o {target}: that is a site file or the history; give another file name")


def _protected(root: Path, db: Path, files) -> set[Path]:
    out = {db.resolve()}
    out.update((root / rel).resolve() for rel in files)
    return out


def _write(target: Path, text: str) -> None:
    try:
        target.write_text(text, encoding="utf-8", newline="")
    except OSError as exc:
        raise CommandError(f"cannot write {target}: {exc.strerror or exc}") from None


def _print_problems(problems) -> None:
    for p in problems:
        print(p, file=sys.stderr)


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
    _guard(target, _protected(root, db, loaded.files))
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
    files = [rel for sl in estate.loads.values() for rel in sl.files]
    protected = _protected(root, db, files)
    if out.exists() and not out.is_dir():
        raise CommandError(f"-o {out}: not a folder (--all-sites writes one file per site and an index into it)")
    if out.resolve() in protected:
        raise CommandError(f"-o {out}: that is a site file or the history")
    render, render_index = _renderers(args.format)
    pages = []
    reader = gather.HistoryReader(db)   # the history read once for every site
    progress = Progress(len(estate.sites), "writing reports")
    try:
        for site in estate.sites.values():
            doc = gather.build(site, estate.loads[site.folder].files, db, since=since,
                               warnings=[w for w in estate.warnings if w.file.startswith(site.folder)], reader=reader)
            pages.append((doc, f"{site.id}.{args.format}", render(doc)))
            progress.advance()
    finally:
        reader.close()
        progress.close()
    loaded_folders = {s.folder for s in estate.sites.values()}
    failed = [(folder or root.name, sl.errors or [e for e in estate.errors if e.file.startswith(folder)])
              for folder, sl in estate.loads.items() if folder not in loaded_folders]
    index = gather.index([(doc, name) for doc, name, _ in pages], failed, str(root))
    try:
        out.mkdir(exist_ok=True)
    except OSError as exc:
        raise CommandError(f"cannot make the folder {out}: {exc.strerror or exc}") from None
    for _, name, text in pages:
        _guard(out / name, protected)
        _write(out / name, text)
    _guard(out / f"index.{args.format}", protected)
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
