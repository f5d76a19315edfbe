"""Each kind of report page opened in a real browser (Debian's headless Chromium, driven by playwright's
Python package) from disk with the network off: no console errors, every image decoded with a non-zero
size, the key figures in the page's text, no request leaving the file, and a screenshot that is not blank.

Skips only where Chromium is absent (CI installs it, as it installs ngspice)."""

import io
import json
import re
import shutil
import tempfile
from pathlib import Path

import pytest
from click.testing import CliRunner

from atticsim.cli.main import cli

ROOT = Path(__file__).resolve().parents[2]
CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="Chromium is not installed (CI installs it)")

#: Flags that keep a headless Chromium from reaching out on a machine with no network.
FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
         "--no-first-run", "--disable-sync"]


@pytest.fixture(scope="module")
def browser():
    from playwright.sync_api import sync_playwright

    profile = tempfile.mkdtemp(prefix="atticsim-chromium-")
    with sync_playwright() as p:
        ctx = p.chromium.launch_persistent_context(profile, executable_path=CHROMIUM, headless=True, args=FLAGS,
                                                   viewport={"width": 1100, "height": 1400})
        ctx.set_offline(True)
        yield ctx
        ctx.close()
    shutil.rmtree(profile, ignore_errors=True)


def open_page(browser, path: Path) -> dict:
    """Load a report from disk; return what the checks need."""
    page = browser.new_page()
    errors, requests = [], []
    page.on("console", lambda m: errors.append(m.text) if m.type in ("error", "warning") else None)
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.on("request", lambda r: requests.append(r.url))
    url = path.resolve().as_uri()
    page.goto(url)
    page.wait_for_load_state("load")
    images = page.evaluate("[...document.images].map(i => [i.complete, i.naturalWidth, i.naturalHeight, i.alt])")
    text = page.inner_text("body")
    shot = page.screenshot(full_page=False)
    page.close()
    return {"errors": errors, "requests": requests, "url": url, "images": images, "text": text, "shot": shot}


def assert_page_ok(r: dict, n_images: int):
    assert r["errors"] == [], r["errors"]
    # the only request is the file itself; images are data inside it (data: URLs raise no request)
    assert all(u == r["url"] for u in r["requests"]), r["requests"]
    assert len(r["images"]) >= n_images
    for complete, w, h, alt in r["images"]:
        assert complete and w > 0 and h > 0, alt
    from PIL import Image

    img = Image.open(io.BytesIO(r["shot"])).convert("L")
    lo, hi = img.getextrema()
    assert hi - lo > 100  # text on the page: not a blank screen
    assert len(img.getcolors(maxcolors=1 << 16) or range(1 << 16)) > 20
    for word in ("What was asked", "Warnings and cautions", "mains potential", "atticsim"):
        assert word in r["text"], word


def invoke(*args):
    result = CliRunner().invoke(cli, [str(a) for a in args])
    assert result.exit_code == 0, result.output
    return result


def number_in(text, value, digits):
    """The page shows the value as the summary holds it, rounded as the page rounds."""
    return f"{value:,.{digits}f}" in text


def test_run_report_in_a_browser(browser, tmp_path):
    out = tmp_path / "run"
    invoke("run", "--out", out, "--start", "2025-07-01", "--end", "2025-07-02", "--set", "simulation.spinup_days=1",
           "--set", 'fan.flow="1100 cfm"')
    s = json.loads((out / "summary.json").read_text())
    r = open_page(browser, out / "report.html")
    assert_page_ok(r, 2)
    t = r["text"]
    assert "1100 cfm" in t and "R-30" in t  # the inputs in the user's own units
    assert number_in(t, s["fan_run_hours"], 1) and f"{s['net_benefit_kwh']:+.2f} kWh" in t
    assert "Net benefit and its parts" in t and "Version and fingerprint" in t
    m = re.search(r"scenario \(sha256 of its validated JSON\)\s+([0-9a-f]{64})", t)
    from atticsim.report.inputs import scenario_digest
    from atticsim.scenario import load_scenario

    sc = load_scenario(None, ["simulation.spinup_days=1", 'fan.flow="1100 cfm"'])
    assert m and m.group(1) == scenario_digest(sc)


def test_design_day_and_compare_reports_in_a_browser(browser, tmp_path):
    a, b = tmp_path / "a", tmp_path / "b"
    invoke("designday", "--date", "2025-07-21", "--tmax", "95degF", "--range", "18degF", "--out", a)
    invoke("designday", "--date", "2025-07-21", "--tmax", "95degF", "--range", "18degF", "--out", b,
           "--set", 'thermostat.on="43 degC"')
    r = open_page(browser, a / "report.html")
    assert_page_ok(r, 2)
    assert "95degF" in r["text"] and "Design-day report" in r["text"]
    out = tmp_path / "cmp"
    invoke("compare", a, b, "--out", out)
    r = open_page(browser, out / "report.html")
    sa = json.loads((a / "summary.json").read_text())
    sb = json.loads((b / "summary.json").read_text())
    assert r["errors"] == [] and all(u == r["url"] for u in r["requests"])
    assert all(c and w > 0 for c, w, h, alt in r["images"]) and len(r["images"]) == 1
    assert "The differences" in r["text"]
    assert f"{sb['fan_starts'] - sa['fan_starts']:+d}" in r["text"] or sb["fan_starts"] == sa["fan_starts"]


def test_study_report_in_a_browser(browser, tmp_path):
    out = tmp_path / "study"
    invoke("sweep", "--vary", "thermostat.on=38,42degC", "--vary", "thermostat.hysteresis=1,4K",
           "--start", "2025-07-01", "--end", "2025-07-01", "--set", "simulation.spinup_days=1", "--workers", "1",
           "--out", out)
    rec = json.loads((out / "recommendation.json").read_text())
    r = open_page(browser, out / "report.html")
    assert_page_ok(r, 1)
    t = r["text"]
    assert "recommended point" in t and "Why" in t and "The front" in t
    assert f"{rec['point']}: " in t
    assert "negative at every point" not in t or "Every point's net benefit is negative" in t


def test_placements_report_in_a_browser(browser, tmp_path):
    out = tmp_path / "pl"
    invoke("placements", "--only", "ridge,intake", "--start", "2025-07-01", "--end", "2025-07-01", "--workers", "1",
           "--set", "simulation.spinup_days=1", "--out", out)
    r = open_page(browser, out / "report.html")
    assert_page_ok(r, 1)
    assert "The placements side by side" in r["text"] and "intake" in r["text"] and "ridge" in r["text"]


def test_circuit_report_in_a_browser(browser, tmp_path):
    out = tmp_path / "th"
    invoke("thermostat", ROOT / "scenarios" / "heron_lane_circuit.toml", "--out", out)
    rep = json.loads((out / "thermostat.json").read_text())
    r = open_page(browser, out / "report.html")
    assert_page_ok(r, 1)
    t = r["text"]
    assert f"{rep['on_c']:.1f} °C" in t and f"{rep['off_c']:.1f} °C" in t
    assert "Mains-side checks" in t and "Hysteresis loop" not in t  # the loop is a figure, not text
    assert any(alt == "hysteresis loop" for *_, alt in r["images"])


def test_fit_report_in_a_browser(browser, tmp_path):
    out = tmp_path / "fit"
    invoke("fit", ROOT / "scenarios" / "heron_lane_bungalow.toml", "--measured",
           ROOT / "weather_demo" / "heron_lane_logger_2025.csv", "--fit", "vents.passive_ach", "--out", out)
    fit = json.loads((out / "fit.json").read_text())
    r = open_page(browser, out / "report.html")
    assert_page_ok(r, 2)
    assert "Fitted values" in r["text"] and "vents.passive_ach" in r["text"]
    assert f"{fit['fitted']['vents.passive_ach']:.4g}" in r["text"]
    assert {"readings and model", "misfit over time and by hour"} <= {alt for *_, alt in r["images"]}


def test_the_checks_catch_an_outside_request_and_a_broken_image(browser, tmp_path):
    # a page that asks for something outside the file (the loopback address; no server there) and holds a
    # broken image: the checks above must fail on it, or they prove nothing
    page = tmp_path / "bad.html"
    page.write_text('<!DOCTYPE html><html><body><p>x</p><img alt="outside" src="http://127.0.0.1:9/x.png">'
                    '<img alt="broken" src="data:image/png;base64,AAAA"></body></html>')
    r = open_page(browser, page)
    assert any(u.startswith("http://127.0.0.1") for u in r["requests"])
    assert any(not (c and w > 0) for c, w, h, alt in r["images"])
    with pytest.raises(AssertionError):
        assert_page_ok(r, 1)
