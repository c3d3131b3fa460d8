"""The planner page in a real browser: Debian's headless Chromium (driven by Selenium through
Debian's chromedriver) against a real ``taubudget serve`` on loopback, with outside network
blocked.

What it checks: the page computes a sample scenario and shows the same headline numbers as the
API for the same request; every plot holds the points of the response it draws; a bad input
shows the service's own problem text next to the field the problem's pointer names; the
permalink reproduces the result; the stability tab reproduces NIST SP 1065 Table 30; /docs and
/redoc render; and no request the browser makes leaves 127.0.0.1. Screenshots are saved in the
test's tmp directory (printed with -s; kept by pytest under its basetemp).
"""

from __future__ import annotations

import json
import urllib.parse
from pathlib import Path

import httpx
import pytest
from selenium import webdriver
from selenium.common.exceptions import TimeoutException
from selenium.webdriver.chrome.service import Service
from selenium.webdriver.common.by import By
from selenium.webdriver.support.ui import Select, WebDriverWait
from support.nist_sp1065 import NBS9_Y, TABLE_30

ROOT = Path(__file__).resolve().parents[2]
OEM_SAMPLE = ROOT / "sample_orbits" / "formats" / "kestrel_nav3.oem"  # invented, see sample_orbits/README.md
OEM_SPAN = ("2027-03-01T01:00:00Z", "2027-03-01T07:00:00Z")  # inside the file's first segment
CHROMIUM = "/usr/bin/chromium"  # Debian's chromium package
CHROMEDRIVER = "/usr/bin/chromedriver"  # Debian's chromium-driver package
COMPUTE_WAIT_S = 120.0  # a week-long MEO budget plus its contact plan, on a busy 2-core machine
SP1065_DIGITS_REL = 1e-6  # Table 30 is printed to 7 significant digits
LOOPBACK = "127.0.0.1"
# Schemes that never touch the network: inline data, object URLs made by the page, blank pages.
LOCAL_SCHEMES = ("data", "blob", "about", "chrome", "devtools")


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    for path in (CHROMIUM, CHROMEDRIVER):
        assert Path(path).exists(), f"{path} missing: scripts/test installs chromium and chromium-driver"
    opts = webdriver.ChromeOptions()
    opts.binary_location = CHROMIUM
    for arg in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                "--disable-component-update", "--disable-sync", "--no-first-run",
                "--disable-default-apps", "--disable-extensions", "--window-size=1400,2400",
                f"--user-data-dir={tmp_path_factory.mktemp('chromium-profile')}",
                # Outside network blocked: every non-loopback request goes to a dead proxy on loopback
                # (Chromium never proxies loopback), and no host name but the literal address resolves.
                "--proxy-server=http://127.0.0.1:9",
                "--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE 127.0.0.1"):
        opts.add_argument(arg)
    opts.set_capability("goog:loggingPrefs", {"performance": "ALL", "browser": "ALL"})
    driver = webdriver.Chrome(service=Service(CHROMEDRIVER), options=opts)
    driver.set_page_load_timeout(60)
    try:
        yield driver
    finally:
        driver.quit()


def _outside_requests(driver, server: str) -> dict[str, str | None]:
    """Requests the browser tried since the last call (DevTools performance log) to anywhere but
    the service, each with the reason the browser blocked it (None: not blocked)."""
    port = urllib.parse.urlsplit(server).port
    urls, blocked = {}, {}
    for entry in driver.get_log("performance"):
        msg = json.loads(entry["message"])["message"]
        if msg["method"] == "Network.requestWillBeSent":
            urls[msg["params"]["requestId"]] = msg["params"]["request"]["url"]
        elif msg["method"] == "Network.loadingFailed":
            blocked[msg["params"]["requestId"]] = msg["params"].get("blockedReason")
    return {url: blocked.get(rid) for rid, url in urls.items()
            if urllib.parse.urlsplit(url).scheme not in LOCAL_SCHEMES
            and (urllib.parse.urlsplit(url).hostname, urllib.parse.urlsplit(url).port) != (LOOPBACK, port)}


def _severe_console(driver) -> list[str]:
    return [e["message"] for e in driver.get_log("browser") if e["level"] == "SEVERE"]


def _wait_ready(driver, previous: str | None = None) -> str:
    """Wait until the page has drawn a new budget (or shown a problem); return its marker."""
    def done(d):
        mark = d.execute_script("return document.body.dataset.budgetReady || null")
        problem = d.find_element(By.ID, "budget-problem")
        if problem.is_displayed():
            raise AssertionError(f"the page shows a problem: {problem.text}")
        return mark if mark and mark != previous else False
    return WebDriverWait(driver, COMPUTE_WAIT_S, poll_frequency=0.2).until(done)


def _headline(driver) -> dict:
    return {e.get_attribute("data-field"): json.loads(e.get_attribute("data-value"))
            for e in driver.find_elements(By.CSS_SELECTOR, "#headline .figure")}


def _point_counts(driver) -> dict:
    """Non-null values per plotted series, read from uPlot's own data (x first)."""
    return driver.execute_script(
        "return Object.fromEntries(Object.entries(window.taubudgetPlots).map("
        "([k, u]) => [k, u.data.map(s => s.filter(v => v !== null && v !== undefined).length)]))")


def _dotted(obj, path):
    for key in path.split("."):
        obj = obj[key]
    return obj


def _permalink_request(href: str) -> dict:
    fragment = urllib.parse.urlsplit(href).fragment
    return json.loads(urllib.parse.parse_qs(fragment)["budget"][0])


def test_planner_page_end_to_end(server, browser, tmp_path):
    d = browser
    d.get(server + "/")
    first = _wait_ready(d)
    # Run a sample scenario by clicking it, as a user would.
    d.find_element(By.CSS_SELECTOR, '#budget-samples [data-sample="meo_every_pass"]').click()
    _wait_ready(d, first)
    d.save_screenshot(str(tmp_path / "planner.png"))
    print(f"screenshot: {tmp_path / 'planner.png'}")

    # The request the page sent, from its permalink; the API's answers to the same request.
    href = d.find_element(By.ID, "permalink").get_attribute("href")
    full = _permalink_request(href)
    assert full["stations"] and full["series_step_s"] > 0 and full["clock"]["preset"] == "space_rubidium"
    plan_only = ("stations", "sync_policy", "relativistic_offset")
    budget_req = {k: v for k, v in full.items() if k not in plan_only}
    with httpx.Client(base_url=server, timeout=COMPUTE_WAIT_S) as c:
        budget = c.post("/v1/budgets", json=budget_req).json()
        plan = c.post("/v1/contact-plans", json=full).json()

    # Headline figures: the exact numbers the API returns, and the text the page shows for them.
    shown = _headline(d)
    for field in ("mean_rate_us_per_day", "mean_fractional_rate", "frequency_preset_fractional",
                  "preset_frequency_hz", "periodic.amplitude_ns",
                  "eccentricity_correction.residual_after_correction_ns", "offset_at_end_ns",
                  "integration_error_estimate_ps", "clock_error.max_free_running_s"):
        assert shown[field] == _dotted(budget, field), field
    assert shown["plan.meets_budget"] == plan["meets_budget"]
    rate_text = d.find_element(By.CSS_SELECTOR, '#headline [data-field="mean_rate_us_per_day"] .value').text
    assert rate_text == f"{budget['mean_rate_us_per_day']:.6f}"
    for p in d.find_elements(By.CSS_SELECTOR, "#budget-results [data-caution]"):
        assert p.is_displayed() and budget["caution"] in p.text
    omitted = d.find_element(By.ID, "omitted-terms").text
    assert all(t["term"] in omitted for t in budget["omitted_terms"])

    # Every plot holds the points of the response it draws.
    n = len(budget["series"]["time_utc"])
    counts = _point_counts(d)
    assert counts["offset"] == [n, n, n, n]  # x, raw, after preset, after correction
    assert counts["periodic"] == [n, n, n, n]
    assert counts["terms"] == [len(budget["terms_fractional"])] * 2
    envelope = plan.get("envelope") or budget["clock_error"]["series"]
    assert counts["envelope"][1] == len(envelope["time_utc"])  # the k-sigma bound
    assert counts["envelope"][3] == len(plan["syncs"])  # sync markers
    names = [s["name"] for s in full["stations"]]
    per_station = [2 * sum(p["station"] == name for p in plan["passes"]) for name in names]
    assert counts["passes"][1:] == per_station + [len(plan["syncs"])]  # AOS + LOS per pass; syncs
    assert sum(per_station) > 0

    # The permalink reproduces the result in a fresh page load.
    d.get("about:blank")
    d.get(href)
    _wait_ready(d)
    assert _headline(d) == shown
    assert _permalink_request(d.find_element(By.ID, "permalink").get_attribute("href")) == full

    # Bad input: the service's own problem text appears next to the field its pointer names.
    for value, status_type in (("abc", "invalid-request"), ("6000", "physically-invalid")):
        field = d.find_element(By.CSS_SELECTOR, '[data-ptr="/orbit/semi_major_axis_km"]')
        field.clear()
        field.send_keys(value)
        d.find_element(By.ID, "run-budget").click()
        bad = {**budget_req, "orbit": {**budget_req["orbit"], "semi_major_axis_km": float(value)
                                       if value != "abc" else value}}
        problem = httpx.post(server + "/v1/budgets", json=bad, timeout=60).json()
        assert problem["type"].endswith(status_type)
        (expected,) = [e for e in problem["errors"] if e["pointer"] == "/orbit/semi_major_axis_km"]
        try:
            msg = WebDriverWait(d, 60).until(lambda dr: dr.find_element(
                By.CSS_SELECTOR, 'label:has([data-ptr="/orbit/semi_major_axis_km"]) .field-error'))
        except TimeoutException:
            pytest.fail("no error shown beside the semi-major axis: "
                        + d.find_element(By.ID, "budget-problem").text)
        assert msg.text == expected["detail"]
        assert msg.get_attribute("data-pointer") == "/orbit/semi_major_axis_km"
        assert "invalid" in field.get_attribute("class")
    d.save_screenshot(str(tmp_path / "planner-bad-input.png"))

    # An uploaded orbit file, its type detected by the service (multipart, as curl -F sends it).
    for remove in d.find_elements(By.CSS_SELECTOR, ".station button"):
        remove.click()
    Select(d.find_element(By.ID, "orbit-type")).select_by_value("file")
    d.find_element(By.ID, "orbit-file").send_keys(str(OEM_SAMPLE))
    for ptr, value in (("/start", OEM_SPAN[0]), ("/end", OEM_SPAN[1]), ("/series_step_s", "600")):
        box = d.find_element(By.CSS_SELECTOR, f'[data-ptr="{ptr}"]')
        box.clear()
        box.send_keys(value)
    mark = d.execute_script("return document.body.dataset.budgetReady")
    d.find_element(By.ID, "run-budget").click()
    _wait_ready(d, mark)
    rest = {**{k: v for k, v in budget_req.items() if k != "orbit"}, "start": OEM_SPAN[0], "end": OEM_SPAN[1],
            "series_step_s": 600}
    uploaded = httpx.post(server + "/v1/budgets", files={"file": (OEM_SAMPLE.name, OEM_SAMPLE.read_bytes())},
                          data={"request": json.dumps(rest)}, timeout=COMPUTE_WAIT_S).json()
    assert uploaded["model"]["orbit"]["source"].startswith("OEM")
    assert _headline(d)["mean_rate_us_per_day"] == uploaded["mean_rate_us_per_day"]
    assert _point_counts(d)["offset"][1] == len(uploaded["series"]["time_utc"])

    # The stability tab: the NBS 9-point sample against NIST SP 1065 Table 30.
    d.find_element(By.CSS_SELECTOR, '[data-tab="stability"]').click()
    d.find_element(By.CSS_SELECTOR, '#stability-samples [data-sample="nbs_9_point"]').click()
    WebDriverWait(d, 60).until(lambda dr: dr.find_element(By.ID, "stability-permalink"))
    data = d.execute_script("return window.taubudgetPlots.stability.data")
    taus, adev = data[0], data[1]
    (_, adev_1, adev_2) = next(row for row in TABLE_30 if row[0] == "adev")
    assert adev[taus.index(1)] == pytest.approx(adev_1, rel=SP1065_DIGITS_REL)
    assert adev[taus.index(2)] == pytest.approx(adev_2, rel=SP1065_DIGITS_REL)
    assert all(lo < v < hi for v, lo, hi in zip(*data[1:], strict=True) if v is not None)
    stab_req = json.loads(urllib.parse.parse_qs(urllib.parse.urlsplit(
        d.find_element(By.ID, "stability-permalink").get_attribute("href")).fragment)["stability"][0])
    assert stab_req["data"] == NBS9_Y

    # Nothing the page asked for left the service; its console shows only the two refusals asked for.
    assert _outside_requests(d, server) == {}
    console = _severe_console(d)
    assert len(console) == 2 and all("/v1/budgets" in m and "status of 422" in m for m in console), console

    # The API docs render from local assets. ReDoc's bundle asks for a logo on a CDN: the
    # service's Content-Security-Policy makes the browser refuse it before it is sent.
    d.get(server + "/docs")
    WebDriverWait(d, 60).until(lambda dr: dr.find_elements(By.CSS_SELECTOR, ".swagger-ui .opblock"))
    d.get(server + "/redoc")
    WebDriverWait(d, 60).until(lambda dr: "taubudget" in dr.find_element(By.TAG_NAME, "body").text
                               and dr.find_elements(By.CSS_SELECTOR, "[data-section-id]"))

    outside = _outside_requests(d, server)
    assert set(outside.values()) <= {"csp"}, outside
    assert all("Content Security Policy" in m for m in _severe_console(d))
    d.save_screenshot(str(tmp_path / "redoc.png"))
