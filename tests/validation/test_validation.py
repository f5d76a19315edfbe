"""The validation cases as tests (one registry for `atticsim validate` and pytest), the repository page's
staleness, and the runner, page and command themselves."""

from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.validation import ERROR, GROUPS, NOT_RUN, OUTSIDE, WITHIN, Case, Comparison, NotRun, all_cases, run_case
from atticsim.validation.page import line_matches, page_differences, render_markdown
from atticsim.validation.registry import compare

ROOT = Path(__file__).resolve().parents[2]
PAGE = ROOT / "docs" / "validation.md"
REGENERATE = "atticsim validate --page docs/validation.md --force"
CASES = all_cases()
_RESULTS = {}  # filled by the case tests, read by the page test (each case runs once per session)


def _result(c):
    if c.key not in _RESULTS:
        _RESULTS[c.key] = run_case(c)
    return _RESULTS[c.key]


@pytest.mark.parametrize("c", CASES, ids=[f"{c.case_id}-{c.key}" for c in CASES])
def test_case_comes_out_as_the_page_states(c):
    # Each case states its reference, source and tolerance beside its computation; here it must come out
    # as declared: within its tolerance, or outside it where the page explains a known miss.
    r = _result(c)
    if r.status == NOT_RUN:
        pytest.skip(r.message)
    assert r.status != ERROR, r.message
    assert r.status == c.expected, (f"{c.case_id} {c.name}: {r.status} (tool {r.tool}, reference {r.reference}, "
                                    f"difference {r.difference}, tolerance {c.tolerance} {c.kind}); the page "
                                    f"states {c.expected}")


def test_repository_page_is_current():
    # docs/validation.md must list the cases, sources, tolerances and outcomes of this run, and its values
    # to their printed digits (one unit of slack in the last digit: a rounding boundary may fall either way
    # on another CPU). Cases not run here (no ngspice) are left out of the comparison.
    results = [_result(c) for c in CASES]
    skip = [r.case.case_id for r in results if r.status == NOT_RUN]
    assert PAGE.is_file(), f"{PAGE} is missing; write it with `{REGENERATE}`"
    diffs = page_differences(PAGE.read_text(), render_markdown(results), skip)
    assert not diffs, f"docs/validation.md is stale; regenerate it with `{REGENERATE}`:\n" + "\n".join(diffs)


# --- the registry holds what the page promises ----------------------------------------------------------

def test_every_part_has_cases_and_every_case_names_its_source():
    assert {c.group for c in CASES} == set(GROUPS)
    ids = [c.case_id for c in CASES]
    assert len(ids) == len(set(ids))
    for c in CASES:
        assert c.source and c.unit and c.inputs and c.name, c.key
        assert (c.expected == OUTSIDE) == bool(c.why), c.key


def test_readme_quotes_the_pages_headline():
    # the README points to the page and repeats its headline (how many cases, how many within tolerance)
    page = PAGE.read_text()
    headline = next(line for line in page.splitlines() if line.startswith("**") and "cases:" in line)
    readme = (ROOT / "README.md").read_text()
    assert "docs/validation.md" in readme
    assert headline.strip("*").split(" (")[0].rstrip(".") in readme


# --- the comparison rules ---------------------------------------------------------------------------------

@pytest.mark.parametrize("kind, tol, tool, ref, within, diff", [
    ("abs", 0.05, 84.27, 84.24, True, 0.03),
    ("abs", 0.05, 84.30, 84.24, False, 0.06),
    ("rel", 0.01, 101.0, 100.0, True, 1.0),
    ("rel", 0.01, -3.1, -3.0, False, -0.1),        # relative to |reference|
    ("range", 0.0, 1.2, (0.5, 2.5), True, 0.0),
    ("range", 0.0, 6.0, (-10.0, 0.0), False, 6.0),  # distance beyond the nearer end
    ("range", 0.0, 0.2, (0.5, None), False, -0.3),
    ("range", 0.5, 2.9, (0.5, 2.5), True, 0.4),     # a margin around the range
])
def test_compare(kind, tol, tool, ref, within, diff):
    ok, d = compare(kind, tol, tool, ref)
    assert ok == within and d == pytest.approx(diff)


def _case(func, **kw):
    base = dict(key=func.__name__, group="solver", name="made-up case", source="none", unit="K", tolerance=0.1,
                kind="abs", digits=2, inputs="none", expected=WITHIN, why="", func=func, order=1)
    base.update(kw)
    return Case(**base)


def test_runner_reports_errors_and_missing_tools_and_hides_nothing():
    def boom():
        raise ZeroDivisionError("division by zero in the case")

    def missing():
        raise NotRun("ngspice not found")

    def nan():
        return Comparison(float("nan"), 1.0)

    def not_a_comparison():
        return 1.0

    assert run_case(_case(boom)).status == ERROR
    assert "ZeroDivisionError: division by zero" in run_case(_case(boom)).message
    r = run_case(_case(missing))
    assert r.status == NOT_RUN and r.message == "ngspice not found" and not r.unexpected
    assert run_case(_case(nan)).status == ERROR
    assert run_case(_case(not_a_comparison)).status == ERROR


def test_a_known_miss_that_passes_is_unexpected():
    def near():
        return Comparison(1.0, 1.05)

    r = run_case(_case(near, expected=OUTSIDE, why="a reason"))
    assert r.status == WITHIN and r.unexpected
    assert not run_case(_case(near)).unexpected


def test_page_comparison_allows_one_unit_in_the_last_digit_only():
    row = "| N1 | | Fast solver | 0.0005 | 0.0000 | 0.0005 | ±0.05 | K | within | LSODA |"
    assert line_matches(row, row.replace("0.0005 | 0.0000 | 0.0005", "0.0006 | 0.0000 | 0.0006"))
    assert not line_matches(row, row.replace("0.0005 | 0.0000 | 0.0005", "0.0008 | 0.0000 | 0.0008"))
    assert not line_matches(row, row.replace("within", "**outside** (unexpected)"))
    assert not line_matches(row, row.replace("±0.05", "±0.5"))
    assert page_differences("a\n\nb 1.00\n", "a\nb 1.01\n") == []
    assert page_differences("a\nb 1.00\n", "a\nb 1.00\nc\n")


# --- the command ----------------------------------------------------------------------------------------

def _fake_results(outcome):
    """A two-case run: one within, one with the given outcome (no physics run)."""
    def good():
        return Comparison(1.0, 1.02)

    def other():
        return Comparison(1.0, 2.0) if outcome != "error" else 1 / 0

    cases = [_case(good, name="good case"),
             _case(other, name="other case", order=2,
                   **({"expected": OUTSIDE, "why": "a reason we know"} if outcome == "known" else {}))]
    return lambda progress=None: [run_case(c) for c in cases]


@pytest.mark.parametrize("outcome, status", [("known", 0), ("new miss", 1), ("error", 1)])
def test_validate_writes_the_page_and_exits_by_outcome(outcome, status, tmp_path, monkeypatch):
    import json

    import atticsim.validation as validation
    from atticsim.cli.main import cli

    monkeypatch.setattr(validation, "run_cases", _fake_results(outcome))
    out = tmp_path / "v"
    res = CliRunner().invoke(cli, ["validate", "--out", str(out)])
    assert res.exit_code == status, res.output
    page = (out / "validation.md").read_text()  # written in every case, a failing one too
    data = json.loads((out / "validation.json").read_text())
    assert [c["status"] for c in data["cases"]][0] == "within" and len(data["cases"]) == 2
    assert "2 cases: 1 within tolerance" in page and "2 cases: 1 within tolerance" in res.output
    report = (out / "report.html").read_text()  # the same page for a browser: headline, every case, why
    assert "2 cases: 1 within tolerance" in report and "good case" in report and "other case" in report
    if outcome == "known":
        assert "a reason we know" in page and "known miss" in res.output and "a reason we know" in report
    else:
        assert "UNEXPECTED" in res.output
    # an existing folder is not overwritten without --force: one line, exit status 2
    res = CliRunner().invoke(cli, ["validate", "--out", str(out)])
    assert res.exit_code == 2 and "pass --force" in res.output
    assert CliRunner().invoke(cli, ["validate", "--out", str(out), "--force"]).exit_code == status


def test_validate_page_option(tmp_path, monkeypatch):
    import atticsim.validation as validation
    from atticsim.cli.main import cli

    monkeypatch.setattr(validation, "run_cases", _fake_results("known"))
    target = tmp_path / "validation.md"
    monkeypatch.chdir(tmp_path)
    res = CliRunner().invoke(cli, ["validate", "--page", str(target)])
    assert res.exit_code == 0, res.output
    assert target.read_text().startswith("# atticsim validation")
    assert not (tmp_path / "validation").exists()  # only the page was asked for
    res = CliRunner().invoke(cli, ["validate", "--page", str(target)])
    assert res.exit_code == 2 and "pass --force" in res.output
    res = CliRunner().invoke(cli, ["validate", "--page", str(tmp_path / "nowhere" / "v.md")])
    assert res.exit_code == 2 and "does not exist" in res.output

