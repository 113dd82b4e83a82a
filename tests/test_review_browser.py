"""The review page in a real browser: headless Chromium (Debian's chromium and chromium-driver)
driven by Selenium loads the page from a file URL, with no console error and no network request;
every plot is visible with a non-zero size; every number of the comparison table equals the
study's JSON; markup in the brief's title shows as text; a full-page screenshot is written into
the review set (review.png). Skips when Chromium is absent; required under CI (CI=true).
"""
from __future__ import annotations

import base64
import json
import math
import os
import re
import shutil
import tempfile
from pathlib import Path

import pytest

import tradeoff
from tradeoff.report.review import REVIEW_LAYOUT, export

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM, CHROMEDRIVER = "/usr/bin/chromium", "/usr/bin/chromedriver"
MARKUP_TITLE = "Towel rail <script>alert('x')</script> & <b>bold</b> boost"

FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync")


def _require_browser() -> None:
    missing = [p for p in (CHROMIUM, CHROMEDRIVER) if not Path(p).exists()]
    try:
        import selenium  # noqa: F401
    except ImportError:
        missing.append("the selenium package")
    if missing:
        if os.environ.get("CI"):
            pytest.fail(f"required under CI: {', '.join(missing)} (.ci/run installs chromium and chromium-driver)")
        pytest.skip(f"browser test needs {', '.join(missing)} (apt-get install -y chromium chromium-driver)")


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    """(driver, review folder, study JSON) with the review page of the towel-rail brief loaded."""
    _require_browser()
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    brief = tradeoff.load_brief(ROOT / "examples" / "towel_rail_boost.yaml").replace({"title": MARKUP_TITLE})
    result = tradeoff.study(brief, samples=4000)
    folder = tmp_path_factory.mktemp("review")
    export(result, review=folder)
    profile = tempfile.mkdtemp(prefix="tradeoff-chromium-")
    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for flag in (*FLAGS, f"--user-data-dir={profile}", "--window-size=1280,900"):
        options.add_argument(flag)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL", "performance": "ALL"})
    driver = webdriver.Chrome(options=options, service=Service(CHROMEDRIVER))
    try:
        driver.get("about:blank")
        driver.get_log("performance")  # drain the browser's own start-up requests (its new-tab page)
        driver.get_log("browser")
        driver.get((folder / REVIEW_LAYOUT["html"]).as_uri())
        yield driver, folder, json.loads((folder / REVIEW_LAYOUT["json"]).read_text())
    finally:
        driver.quit()
        shutil.rmtree(profile, ignore_errors=True)


def test_loads_without_console_errors_or_network(page):
    driver, folder, _ = page
    errors = [e for e in driver.get_log("browser") if e["level"] in ("SEVERE", "ERROR", "WARNING")]
    assert not errors, errors
    page_url = (folder / REVIEW_LAYOUT["html"]).as_uri()
    requested = []
    for entry in driver.get_log("performance"):
        message = json.loads(entry["message"])["message"]
        if message["method"] == "Network.requestWillBeSent":
            requested.append(message["params"]["request"]["url"])
    assert requested and all(url == page_url for url in requested), requested
    resources = driver.execute_script("return performance.getEntriesByType('resource').map(e => e.name)")
    assert resources == [], resources


def test_every_plot_visible_with_a_size(page):
    driver, _, data = page
    from selenium.webdriver.common.by import By

    plots = driver.find_elements(By.CSS_SELECTOR, "figure.plot svg")
    strips = driver.find_elements(By.CSS_SELECTOR, "figure.strip-plot svg")
    assert len(strips) == len(data["designs"]) and driver.find_elements(By.CSS_SELECTOR, "figure.pareto-plot svg")
    assert len(plots) >= 3 * len(data["designs"])  # strip and histogram at least, per design, and the Pareto views
    for svg in plots:
        driver.execute_script("arguments[0].scrollIntoView()", svg)
        size = svg.size
        assert svg.is_displayed() and size["width"] > 50 and size["height"] > 30, size


def _json_at(data, path: str):
    node = data
    for key in path.split("/"):
        node = node[int(key)] if isinstance(node, list) else node[key]
    return node


_SCALE = {"[h]": 1 / 3600, "[min]": 1 / 60, "[s]": 1.0, "[%]": 100.0, "[% of band]": 100.0, "[µA]": 1e6}
"""Header unit -> factor from the JSON's SI value (seconds, fraction, amperes) to the shown number."""


def test_comparison_numbers_equal_the_json(page):
    driver, _, data = page
    from selenium.webdriver.common.by import By

    headers = [th.text for th in driver.find_elements(By.CSS_SELECTOR, "table.comparison thead th")]
    rows = driver.find_elements(By.CSS_SELECTOR, "table.comparison tbody tr")
    feasible = [r for r in rows if r.find_elements(By.CSS_SELECTOR, "td[data-json]")]
    assert len(feasible) == len(data["designs"])
    assert len([r for r in rows if "infeasible" in r.get_attribute("class")]) == len(data["infeasible"])
    checked = 0
    for row in feasible:
        for cell in row.find_elements(By.CSS_SELECTOR, "td"):
            path = cell.get_attribute("data-json")
            if not path:
                continue
            header = headers[row.find_elements(By.CSS_SELECTOR, "td").index(cell)]
            unit = next((u for u in _SCALE if header.endswith(u)), None)
            factor = _SCALE[unit] if unit else 1.0
            expected = [_json_at(data, p) * factor for p in path.split()]
            shown = [float(x) for x in re.findall(r"-?\d+(?:\.\d+)?", cell.text.replace("–", " "))]
            assert len(shown) == len(expected), (header, cell.text)
            for s, e in zip(shown, expected):
                assert math.isclose(s, e, rel_tol=5e-3, abs_tol=5e-4), (header, cell.text, e)
            if cell.get_attribute("data-value") is not None:
                assert float(cell.get_attribute("data-value")) == _json_at(data, path)
            checked += 1
    assert checked >= 8 * len(data["designs"])


def test_title_markup_shows_as_text(page):
    driver, _, data = page
    from selenium.webdriver.common.by import By

    assert driver.find_element(By.TAG_NAME, "h1").text == MARKUP_TITLE == data["brief"]["title"]
    assert driver.find_elements(By.TAG_NAME, "script") == []
    assert driver.find_elements(By.CSS_SELECTOR, "h1 b") == []
    assert MARKUP_TITLE in driver.title


def test_full_page_screenshot_into_the_review_set(page):
    driver, folder, _ = page
    metrics = driver.execute_cdp_cmd("Page.getLayoutMetrics", {})
    width, height = metrics["cssContentSize"]["width"], metrics["cssContentSize"]["height"]
    shot = driver.execute_cdp_cmd("Page.captureScreenshot", {
        "format": "png", "captureBeyondViewport": True,
        "clip": {"x": 0, "y": 0, "width": width, "height": height, "scale": 1}})
    png = base64.b64decode(shot["data"])
    target = folder / "review.png"
    target.write_bytes(png)
    assert png[:8] == b"\x89PNG\r\n\x1a\n" and height > 2000
    keep = os.environ.get("TRADEOFF_REVIEW_SHOT")
    if keep:  # CI keeps the screenshot beside its logs
        Path(keep).write_bytes(png)
