"""``atticsim validate``: run the validation cases and write the page that shows how close atticsim comes."""

from __future__ import annotations

import sys
from pathlib import Path

import click

DEFAULT_OUT = "validation"


@click.command()
@click.option("--out", type=click.Path(file_okay=False),
              help=f"Folder for validation.md, validation.json and report.html (default: ./{DEFAULT_OUT}/ unless "
                   "only --page is given; must be new or empty unless --force).")
@click.option("--page", type=click.Path(dir_okay=False),
              help="Also write the Markdown page to this file (in a source checkout: docs/validation.md).")
@click.option("--force", is_flag=True, help="Replace the files of an existing --out folder or --page file.")
def validate(out, page, force):
    """Compare atticsim with the outside world: published test cases, handbook formulas worked by hand,
    ngspice, the reference solver and field studies. Writes a page with atticsim's figure, the reference,
    the difference, the tolerance and the source of every case, as Markdown and as report.html. Exits with
    status 1 when a case comes out other than the page states (a new miss or an error), after writing."""
    import time

    from atticsim.cli.options import claim_out, command_line, say_if_compiling

    if out is None and page is None:
        out = DEFAULT_OUT
    claim = claim_out(out, force) if out is not None else None
    if page is not None:
        _check_page(Path(page), force)

    from atticsim.report.page import write_page
    from atticsim.results.output import write_json
    from atticsim.validation import run_cases
    from atticsim.validation.page import render_html, render_markdown, results_json
    from atticsim.validation.report import summary_text

    tty = sys.stderr.isatty()

    def progress(i, n, r):
        if tty:
            click.echo(f"\r\033[K[{i}/{n}] {r.case.case_id} {r.case.name[:60]}", err=True, nl=False)

    start = time.perf_counter()
    say_if_compiling()
    results = run_cases(progress=progress)
    seconds = time.perf_counter() - start
    if tty:
        click.echo("\r\033[K", err=True, nl=False)
    text = render_markdown(results)
    written = []
    if claim is not None:
        data, html = results_json(results), render_html(results, command_line(click.get_current_context()))
        files = claim.write({"validation.md": lambda p: p.write_text(text, encoding="utf-8"),
                             "validation.json": lambda p: write_json(p, data),
                             "report.html": lambda p: p.write_text(html, encoding="utf-8")})
        written += [str(f) for f in files]
    if page is not None:
        write_page(Path(page), text)
        written.append(page)
    click.echo(summary_text(results, seconds))
    click.echo(f"wrote {', '.join(written)}", err=True)
    if any(r.unexpected for r in results):
        sys.exit(1)


def _check_page(target: Path, force: bool) -> None:
    """Refuse a --page whose folder is missing, or a file there without --force (before the cases run)."""
    from atticsim.errors import OutputError

    if not target.parent.is_dir():
        raise OutputError(f"--page: {target}: folder {target.parent} does not exist")
    if target.is_dir():
        raise OutputError(f"--page: {target}: is a folder; give a file name")
    if target.exists() and not force:
        raise OutputError(f"--page: {target}: file exists; pass --force to replace it")
