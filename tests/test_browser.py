"""report.html in a real browser: headless Chromium (the system's package, which `.ci/run`
installs) through its WebDriver.

It loads with no console error, every figure decodes, no table makes the page wider than the
window, and the first screen (1280 x 900, saved as a screenshot) holds the verdict.  Where
Chromium or its driver is not installed the test is skipped, saying so.  The study is the invented
one of test_scale_effect (inputs, not check values).
"""

from __future__ import annotations

import shutil
import tomllib

import pytest

from tests import test_scale_effect as scale_effect

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
DRIVER = shutil.which("chromedriver")

TEXT = scale_effect.STUDY + """
[[requirement]]
output = "drag_coefficient"
expanded_uncertainty = "2 counts"
[design]
trials = 2000
verify_trials = 4000
"""


@pytest.mark.slow
@pytest.mark.skipif(CHROMIUM is None or DRIVER is None,
                    reason="Chromium and chromedriver are not installed (.ci/run installs them)")
def test_report_renders_in_headless_chromium(tmp_path):
    from selenium import webdriver
    from selenium.webdriver.chrome.options import Options
    from selenium.webdriver.chrome.service import Service

    from simunc.pipeline import run
    from simunc.report.write import write_report
    from simunc.study.readers import parse_study

    result = run(parse_study(tomllib.loads(TEXT)), trials=4000, parts=("requirements",))
    out = tmp_path / "report"
    write_report(result, out)
    opts = Options()
    opts.binary_location = str(CHROMIUM)
    for arg in ("--headless=new", "--no-sandbox", "--disable-gpu", "--window-size=1280,900",
                "--disable-dev-shm-usage"):
        opts.add_argument(arg)
    opts.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(str(DRIVER)), options=opts)
    try:
        driver.get((out / "report.html").as_uri())
        errors = [e for e in driver.get_log("browser") if e.get("level") == "SEVERE"]
        assert not errors, errors
        images = driver.execute_script(
            "return [...document.images].map(i => [i.complete, i.naturalWidth])")
        assert images and all(done and width > 0 for done, width in images)
        assert driver.execute_script(
            "return document.documentElement.scrollWidth <= document.documentElement.clientWidth")
        driver.save_screenshot(str(tmp_path / "first_screen.png"))
        assert (tmp_path / "first_screen.png").stat().st_size > 10_000
        inside = driver.execute_script(
            "const h = [...document.querySelectorAll('h2')].find(e => e.textContent === 'Verdict');"
            "if (!h) return false; const r = h.getBoundingClientRect();"
            "const list = h.nextElementSibling.getBoundingClientRect();"
            "return r.top >= 0 && list.bottom <= window.innerHeight;")
        assert inside, "the verdict is not on the first screen"
    finally:
        driver.quit()
