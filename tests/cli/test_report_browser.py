"""The HTML report opened in a real headless browser (Chromium from the system package manager, driven by
selenium with the system's chromedriver): its sections, tables, status marks, caution and figures are there."""
from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_plant.toml"


def _browser() -> tuple[str, str]:
    binary = shutil.which("chromium") or shutil.which("chromium-browser")
    driver = shutil.which("chromedriver")
    if not binary or not driver:
        pytest.skip("no Chromium/chromedriver on this machine: `make browser` installs them from the system "
                    "package manager (needs root or password-less sudo)")
    return binary, driver


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    binary, driver = _browser()
    webdriver = pytest.importorskip("selenium.webdriver", reason="selenium is a test dependency (pip)")
    from selenium.webdriver.chrome.service import Service

    folder = tmp_path_factory.mktemp("report")
    html = folder / "report.html"
    done = subprocess.run([sys.executable, "-m", "hipeq.interfaces.cli", "run", str(DEMO), "--out", str(folder)],
                          capture_output=True, text=True, env={"HIPEQ_QUIET": "1", "PATH": "/usr/bin:/bin",
                                                                "HOME": str(Path.home())}, timeout=600)
    assert done.returncode == 0, done.stderr
    options = webdriver.ChromeOptions()
    options.binary_location = binary
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage"):
        options.add_argument(flag)
    browser = webdriver.Chrome(service=Service(driver), options=options)
    try:
        browser.get(html.as_uri())
        yield browser
    finally:
        browser.quit()


def test_report_has_its_sections_and_caution(page):
    from selenium.webdriver.common.by import By

    assert "hipeq report" in page.title
    text = page.find_element(By.TAG_NAME, "body").text
    for heading in ("Equilibrium at T = 440.00 degC", "Ideal gas against real-gas models", "Operating map",
                    "Adiabatic bed", "Beds in series", "Data sources", "Status marks"):
        assert heading in text
    assert "thermodynamic limit, not a design basis" in page.find_element(By.ID, "caution").text
    assert "standard state: ideal gas at 1 bar" in text
    tables = page.find_elements(By.TAG_NAME, "table")
    assert len(tables) >= 2
    marks = page.find_elements(By.CSS_SELECTOR, "td.mark-ok")
    assert marks and all(m.text == "ok" for m in marks)


def test_report_images_are_embedded_and_load(page):
    from selenium.webdriver.common.by import By

    images = page.find_elements(By.CSS_SELECTOR, "figure img")
    assert len(images) >= 3  # the map, the yield against pressure, the beds
    for image in images:  # every embedded figure decoded by the browser (naturalWidth > 0)
        assert image.get_attribute("src").startswith("data:image/png;base64,")
        assert page.execute_script("return arguments[0].complete && arguments[0].naturalWidth", image) > 0
