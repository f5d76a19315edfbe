"""``atticsim compare``: two result folders side by side."""

from __future__ import annotations

from pathlib import Path

import click

from atticsim.cli.options import force_option, units_option


@click.command()
@click.argument("a", type=click.Path(file_okay=False))
@click.argument("b", type=click.Path(file_okay=False))
@click.option("--out", "out", type=click.Path(file_okay=False),
              help="Also write compare.csv, compare.png and report.html to this folder.")
@units_option
@force_option
def compare(a, b, out, units, force):
    """Compare two run folders A and B (written by run or designday with --out): the summary figures side by
    side with their differences, and with --out the temperatures and fan state overlaid and a report page.
    Reads timeseries.parquet where a folder has one, else timeseries.csv."""
    from atticsim.report.labels import label, unit
    from atticsim.report.page import fmt
    from atticsim.results.compare import read_run_folder, summary_differences
    from atticsim.results.export import ip_summary

    if out:
        from atticsim.results.output import check_output_dir

        check_output_dir(Path(out), force)
    ra, rb = read_run_folder(a), read_run_folder(b)
    diffs = summary_differences(ip_summary(ra.summary, units), ip_summary(rb.summary, units))
    rows = []
    for key, va, vb, d in diffs:
        u = unit(key)
        if d is not None and abs(d) <= 1e-9 * max(abs(va), abs(vb), 1.0):
            d = 0.0  # rounding noise
        diff = "" if d is None else ("0" if d == 0 else f"{'+' if d > 0 else ''}{fmt(d)} {u}".strip())
        rows.append((label(key), f"{fmt(va)} {u}".strip() if va is not None else "-",
                     f"{fmt(vb)} {u}".strip() if vb is not None else "-", diff, key))
    w = max(len(r[0]) for r in rows)
    click.echo(f"A: {ra.folder} ({ra.period})\nB: {rb.folder} ({rb.period})")
    click.echo(f"{'figure':<{w}}  {'A':>16}  {'B':>16}  {'B - A':>14}")
    for r in rows:
        click.echo(f"{r[0]:<{w}}  {r[1]:>16}  {r[2]:>16}  {r[3]:>14}")
    if out:
        import csv

        from atticsim.cli.options import command_line
        from atticsim.report.html import compare_page, report_writer
        from atticsim.report.plots import compare_figure, save_figure
        from atticsim.results.output import write_outputs

        ctx = click.get_current_context()

        def table(p):
            with open(p, "w", newline="") as fh:
                wr = csv.writer(fh)
                wr.writerow(["key", "figure", "unit", "a", "b", "b_minus_a"])
                for key, va, vb, d in diffs:
                    wr.writerow([key, label(key), unit(key), va, vb, d])

        files = write_outputs(out, {
            "compare.csv": table,
            "compare.png": lambda p: save_figure(compare_figure(ra, rb, units), p),
            "report.html": report_writer(lambda folder: compare_page(ra, rb, rows, units, command_line(ctx), folder)),
        }, force=force)
        click.echo(f"wrote {len(files)} files to {out}", err=True)
