"""The planner page in a real browser: Debian's headless Chromium (driven by Selenium through
Debian's chromedriver) against a real ``taubudget serve`` on loopback, with outside network
blocked.

What it checks: the page computes a sample scenario and shows the same headline numbers as the
API for the same request; every plot holds the points of the response it draws; a bad input
shows the service's own problem text next to the field the problem's pointer names; the
permalink reproduces the result; the stability tab reproduces NIST SP 1065 Table 30; /docs and
/redoc render; and no request the browser makes leaves 127.0.0.1. Screenshots are saved in the
test's tmp directory (printed with -s; kept by pytest under its basetemp).

Against a second server started with an API key (TAUBUDGET_API_KEYS): the page and its assets
load without one, a sample run without a key or with a wrong one shows the service's own 401
problem, with the key typed in the sample computes to the API's keyed answer and the CSV link
saves the keyed GET's answer, and the key goes nowhere but the X-API-Key header of requests to
the service (not a URL, the page's text, its snippets, localStorage or a cookie).
"""

from __future__ import annotations

import json
import secrets
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
from support.server import ServerFailed, running_server

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


def _network(driver) -> list[dict]:
    """Requests the browser made since the last call (DevTools performance log): url, method,
    request headers, response status (None: no response) and the reason it was blocked (if so)."""
    reqs: dict[str, dict] = {}
    for entry in driver.get_log("performance"):
        msg = json.loads(entry["message"])["message"]
        params = msg.get("params", {})
        if msg["method"] == "Network.requestWillBeSent":
            r = reqs.setdefault(params["requestId"], {"status": None, "blocked": None})
            r.update(url=params["request"]["url"], method=params["request"]["method"],
                     headers=params["request"].get("headers", {}))
        elif msg["method"] == "Network.responseReceived":
            reqs.setdefault(params["requestId"], {"blocked": None})["status"] = params["response"]["status"]
        elif msg["method"] == "Network.loadingFailed":
            reqs.setdefault(params["requestId"], {"status": None})["blocked"] = params.get("blockedReason")
    return [r for r in reqs.values() if "url" in r]


def _is_service(url: str, server: str) -> bool:
    u, s = urllib.parse.urlsplit(url), urllib.parse.urlsplit(server)
    return (u.hostname, u.port) == (LOOPBACK, s.port)


def _outside(requests: list[dict], server: str) -> dict[str, str | None]:
    """Of those requests, the ones to anywhere but the service, each with the reason the browser
    blocked it (None: not blocked)."""
    return {r["url"]: r["blocked"] for r in requests
            if urllib.parse.urlsplit(r["url"]).scheme not in LOCAL_SCHEMES
            and not _is_service(r["url"], server)}


def _outside_requests(driver, server: str) -> dict[str, str | None]:
    """Requests the browser tried since the last call to anywhere but the service (see _outside)."""
    return _outside(_network(driver), server)


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


# --- A service that asks for API keys (app/access.py: TAUBUDGET_API_KEYS, X-API-Key header) ---
KEY_NAME = "planning-desk"  # an invented key name
KEYED_SAMPLE = "meo_circular_point_mass"  # a cheap budget sample with a GET /v1/budgets.csv spelling
CURL_KEY_HEADER = '-H "X-API-Key: $TAUBUDGET_API_KEY"'  # page.js: the curl snippets' key, from the shell
SHEET_KEY_PARAMETER = "api_key=YOUR_SPREADSHEET_KEY"  # page.js: the spreadsheet cells' placeholder
KEY_STORAGE_ITEM = "taubudget-api-key"  # page.js: the key, kept for the tab (sessionStorage) only
PROBLEM_WAIT_S = 60.0  # a refusal needs no computing; the slack is for a busy machine


@pytest.fixture(scope="module")
def api_key() -> str:
    return "k-" + secrets.token_urlsafe(24)


@pytest.fixture(scope="module")
def keyed_server(api_key):
    """A second real server, with one API key set through its environment."""
    try:
        with running_server(env={"TAUBUDGET_API_KEYS": json.dumps({KEY_NAME: api_key})}) as base:
            yield base
    except ServerFailed as exc:
        pytest.fail(str(exc))


def _wait_problem(driver) -> str:
    """Wait until the budget tab shows a problem (the run has ended); return its text."""
    def shown(d):
        box = d.find_element(By.ID, "budget-problem")
        return box.is_displayed() and d.find_element(By.ID, "run-budget").is_enabled() and box.text
    return WebDriverWait(driver, PROBLEM_WAIT_S, poll_frequency=0.1).until(shown)


def _assert_key_problem(driver, text: str, problem: dict) -> None:
    """The service's own problem is what the page shows, not pinned to an unrelated form field;
    the key field is the one marked."""
    assert problem["status"] == 401 and problem["type"].endswith("unauthorized"), problem
    assert text.startswith(f"{problem['title']} {problem['detail']}"), text
    assert all(e["detail"] in text for e in problem["errors"]), (text, problem["errors"])
    assert driver.find_elements(By.CSS_SELECTOR, "#budget-form .invalid") == []
    assert "invalid" in driver.find_element(By.ID, "api-key").get_attribute("class")


def test_planner_page_with_api_keys(keyed_server, api_key, browser, tmp_path):
    d = browser
    d.get_log("performance"), d.get_log("browser")  # drop what earlier tests left in the logs
    with httpx.Client(base_url=keyed_server, timeout=COMPUTE_WAIT_S) as c:
        sample = c.get("/openapi.json").json()["paths"]["/v1/budgets"]["post"]["requestBody"]["content"][
            "application/json"]["examples"][KEYED_SAMPLE]["value"]
        no_key = c.post("/v1/budgets", json=sample).json()
        wrong = c.post("/v1/budgets", json=sample, headers={"X-API-Key": api_key[::-1]}).json()

    # 1. The page and its assets are open; its first sample is refused with the service's own 401.
    d.get(keyed_server + "/")
    _assert_key_problem(d, _wait_problem(d), no_key)
    assert not d.find_element(By.ID, "budget-results").is_displayed()
    d.find_element(By.CSS_SELECTOR, f'#budget-samples [data-sample="{KEYED_SAMPLE}"]').click()
    _assert_key_problem(d, _wait_problem(d), no_key)
    before_key = _network(d)
    page_files = [r for r in before_key if not urllib.parse.urlsplit(r["url"]).path.startswith("/v1")]
    assert {urllib.parse.urlsplit(r["url"]).path for r in page_files} >= {
        "/", "/web/page.js", "/web/page.css", "/web/vendor/uPlot.iife.min.js", "/openapi.json"}
    assert all(r["status"] == 200 for r in page_files), page_files
    refused = [r for r in before_key if r not in page_files]
    assert [(r["method"], r["status"]) for r in refused] == [("POST", 401)] * 2, refused
    assert not any("x-api-key" in map(str.lower, r["headers"]) for r in refused)
    console = _severe_console(d)  # the two refusals, and no script error
    assert len(console) == 2 and all("/v1/budgets" in m and "status of 401" in m for m in console), console

    # 2. With the key typed in, the same sample computes; its headline is the API's answer.
    d.find_element(By.ID, "api-key").send_keys(api_key)
    d.find_element(By.CSS_SELECTOR, f'#budget-samples [data-sample="{KEYED_SAMPLE}"]').click()
    _wait_ready(d)
    assert "invalid" not in d.find_element(By.ID, "api-key").get_attribute("class")
    href = d.find_element(By.ID, "permalink").get_attribute("href")
    sent = _permalink_request(href)
    assert sample["orbit"].items() <= sent["orbit"].items() and sent["series_step_s"] > 0
    budget = httpx.post(keyed_server + "/v1/budgets", json=sent, headers={"X-API-Key": api_key},
                        timeout=COMPUTE_WAIT_S).json()
    shown = _headline(d)
    assert "mean_rate_us_per_day" in shown and "offset_at_end_ns" in shown
    assert shown == {f: _dotted(budget, f) for f in shown}

    # A GET link of the page (the budget's CSV) goes with the key in its header, not its URL.
    d.execute_cdp_cmd("Browser.setDownloadBehavior", {"behavior": "allow", "downloadPath": str(tmp_path)})
    csv_url = d.find_element(By.ID, "csv-link").get_attribute("href")
    d.find_element(By.ID, "csv-link").click()
    saved = tmp_path / "budget-series.csv"
    WebDriverWait(d, PROBLEM_WAIT_S).until(lambda _: saved.exists())
    expected_csv = httpx.get(csv_url, headers={"X-API-Key": api_key}, timeout=COMPUTE_WAIT_S)
    assert expected_csv.status_code == 200
    assert saved.read_bytes() == expected_csv.content

    # 3. The key does not leak: not into a URL, the page's text, the snippets or lasting storage;
    # it goes only to the service, in the X-API-Key header.
    with_key = _network(d)
    assert _outside(before_key + with_key, keyed_server) == {}
    calls = [r for r in with_key if urllib.parse.urlsplit(r["url"]).path.startswith("/v1")]
    assert {(r["method"], urllib.parse.urlsplit(r["url"]).path, r["status"]) for r in calls} == {
        ("POST", "/v1/budgets", 200), ("GET", "/v1/budgets.csv", 200)}
    assert all({k.lower(): v for k, v in r["headers"].items()}.get("x-api-key") == api_key for r in calls)
    assert all(api_key not in r["url"] for r in before_key + with_key)
    assert api_key not in href and api_key not in d.current_url
    assert api_key not in d.page_source  # the field's value is a property, never an attribute
    exports = d.find_element(By.ID, "exports").text
    assert api_key not in exports
    assert exports.count(CURL_KEY_HEADER) == 1 and SHEET_KEY_PARAMETER in exports
    assert d.execute_script("return localStorage.length") == 0 and d.get_cookies() == []
    assert d.execute_script("return Object.keys(sessionStorage)") == [KEY_STORAGE_ITEM]

    # 4. A wrong key: the service's own refusal again, and the last result marked stale.
    key_box = d.find_element(By.ID, "api-key")
    key_box.clear()
    key_box.send_keys(api_key[::-1])
    d.find_element(By.ID, "run-budget").click()
    _assert_key_problem(d, _wait_problem(d), wrong)
    assert "stale" in d.find_element(By.ID, "budget-results").get_attribute("class")
    assert _outside_requests(d, keyed_server) == {}
