"""``atticsim validate``: run the validation cases and write the page that shows how close atticsim comes."""

from __future__ import annotations

import sys
from pathlib import Path

import click

DEFAULT_OUT = "validation"


@click.command()
@click.option("--out", type=click.Path(file_okay=False),
              help=f"Folder for validation.md and validation.json (default: ./{DEFAULT_OUT}/ unless only "
                   "--page is given; must be new or empty unless --force).")
@click.option("--page", type=click.Path(dir_okay=False),
              help="Also write the Markdown page to this file (in a source checkout: docs/validation.md).")
@click.option("--force", is_flag=True, help="Replace the files of an existing --out folder or --page file.")
def validate(out, page, force):
    """Compare atticsim with the outside world: published test cases, handbook formulas worked by hand,
    ngspice, the reference solver and field studies. Writes a page with atticsim's figure, the reference,
    the difference, the tolerance and the source of every case. Exits with status 1 when a case comes out
    other than the page states (a new miss or an error), after writing the page."""
    import time

    from atticsim.results.output import OutputExistsError, check_output_dir, write_json, write_outputs
    from atticsim.validation import run_cases
    from atticsim.validation.page import render_markdown, results_json
    from atticsim.validation.report import summary_text, write_page

    if out is None and page is None:
        out = DEFAULT_OUT
    if out is not None:
        check_output_dir(Path(out), force)
    if page is not None:
        target = Path(page)
        if not target.parent.is_dir():
            raise FileNotFoundError(f"--page: {page}: folder {target.parent} does not exist")
        if target.exists() and not force:
            raise OutputExistsError(f"--page: {page}: file exists; pass --force to replace it")

    tty = sys.stderr.isatty()

    def progress(i, n, r):
        if tty:
            click.echo(f"\r\033[K[{i}/{n}] {r.case.case_id} {r.case.name[:60]}", err=True, nl=False)

    start = time.perf_counter()
    results = run_cases(progress=progress)
    seconds = time.perf_counter() - start
    if tty:
        click.echo("\r\033[K", err=True, nl=False)
    text = render_markdown(results)
    written = []
    if out is not None:
        data = results_json(results)
        files = write_outputs(out, {"validation.md": lambda p: p.write_text(text),
                                    "validation.json": lambda p: write_json(p, data)}, force=force)
        written += [str(f) for f in files]
    if page is not None:
        write_page(Path(page), text)
        written.append(page)
    click.echo(summary_text(results, seconds))
    click.echo(f"wrote {', '.join(written)}", err=True)
    if any(r.unexpected for r in results):
        sys.exit(1)
