"""The bridge page in a real headless Chromium (Debian's chromium + chromedriver, never a downloaded one).

The app is served by werkzeug's threaded server on a free loopback port; the state comes from the test
fixture in web_fixtures.py (a frozen 3 a.m. state). Screenshots of each palette go to tests/artifacts/.
"""

from __future__ import annotations

import io
import pathlib
import socket
import threading
import time
from datetime import UTC, datetime, timedelta

import numpy as np
import pytest
from web_fixtures import NOW, make_provider
from werkzeug.serving import make_server

from onboard.live.web import create_app

pytestmark = pytest.mark.browser

CHROMIUM = "/usr/bin/chromium"
CHROMEDRIVER = "/usr/bin/chromedriver"
ARTIFACTS = pathlib.Path(__file__).resolve().parents[1] / "artifacts"


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


class _Server:
    """The app on a free loopback port in a daemon thread."""

    def __init__(self, app):
        self.port = _free_port()
        self.server = make_server("127.0.0.1", self.port, app, threaded=True)
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.url = f"http://127.0.0.1:{self.port}/"

    def __enter__(self):
        self.thread.start()
        return self

    def __exit__(self, *exc):
        self.server.shutdown()
        self.thread.join(10)


@pytest.fixture(scope="module")
def driver(tmp_path_factory):
    for binary in (CHROMIUM, CHROMEDRIVER):
        if not pathlib.Path(binary).exists():
            pytest.fail(
                f"{binary} is missing: apt-get install -y chromium chromium-driver (the CI script does this)"
            )
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = CHROMIUM
    for flag in (
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        "--disable-dev-shm-usage",
        "--window-size=1600,1000",
        "--force-device-scale-factor=1",
        f"--user-data-dir={tmp_path_factory.mktemp('chromium-profile')}",
    ):
        options.add_argument(flag)
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    drv = webdriver.Chrome(service=Service(executable_path=CHROMEDRIVER), options=options)
    drv.set_page_load_timeout(30)
    # A common bridge display size (full HD), exactly, whatever the headless window decorations take.
    drv.execute_cdp_cmd(
        "Emulation.setDeviceMetricsOverride",
        {"width": 1920, "height": 1080, "deviceScaleFactor": 1, "mobile": False},
    )
    try:
        yield drv
    finally:
        drv.quit()


def _wait(drv, condition, timeout=15.0, what="condition"):
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        value = drv.execute_script(condition)
        if value:
            return value
        time.sleep(0.1)
    raise AssertionError(f"timed out after {timeout} s waiting for {what}: {condition}")


def _open(drv, url, palette="day"):
    drv.get_log("browser")  # drop what earlier tests left (e.g. refused requests after a server stopped)
    drv.get(url)
    drv.execute_script("localStorage.clear();")
    drv.get(url)
    _wait(
        drv,
        "return document.body.dataset.loaded === 'yes'",
        what="first state drawn",
    )
    if palette != "day":
        drv.find_element("css selector", f'.palette-switch button[data-palette="{palette}"]').click()


def _severe_logs(drv):
    return [e for e in drv.get_log("browser") if e["level"] in ("SEVERE", "ERROR")]


def _luminance(rgb):
    """Relative luminance of an sRGB colour, 0..1 (WCAG 2.x definition, from IEC 61966-2-1)."""

    def lin(c):
        c = c / 255.0
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (lin(c) for c in rgb[:3])
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def _parse_css_rgb(text):
    inner = text[text.index("(") + 1 : text.index(")")]
    parts = [float(p) for p in inner.replace("/", ",").replace(" ", ",").split(",") if p]
    return parts[:3], (parts[3] if len(parts) > 3 else 1.0)


def _check_contour_vertices(hv, polar, grid, level, tol=0.02):
    """Each contour vertex ``heading,speed`` lies on an edge between neighbouring cell centres where the
    linearly interpolated grid value equals ``level``; returns the number of vertices checked."""
    headings = np.array(polar["headings_deg"])
    speeds = list(polar["speeds_kn"])
    cols = grid.copy()
    step = 360.0 / len(headings)
    # The page extends the grid to the rim (outer speed edge) with the outermost values.
    vmax = speeds[-1] + (speeds[-1] - speeds[-2]) / 2
    speeds.append(vmax)
    cols = np.concatenate([cols, cols[:, -1:]], axis=1)
    n = 0
    for line in hv.split(";"):
        for point in line.split(" "):
            h, v = (float(x) for x in point.split(","))
            j = int(np.argmin([abs(v - s) for s in speeds]))
            if abs(speeds[j] - v) < 2e-3:  # on an edge between two headings at speed node j
                i = int(np.floor((h - headings[0]) / step + 1e-6)) % len(headings)
                f = ((h - headings[i]) % 360.0) / step
                u = cols[i, j] + f * (cols[(i + 1) % len(headings), j] - cols[i, j])
            else:  # on an edge between two speeds at a heading node
                i = int(np.argmin(np.abs(((headings - h + 180.0) % 360.0) - 180.0)))
                assert abs(((headings[i] - h + 180.0) % 360.0) - 180.0) < 2e-2, (h, v)
                k = int(np.searchsorted(speeds, v)) - 1
                f = (v - speeds[k]) / (speeds[k + 1] - speeds[k])
                u = cols[i, k] + f * (cols[i, k + 1] - cols[i, k])
            assert abs(u - level) < tol, (h, v, u)
            n += 1
    return n


def _screenshot(drv, name):
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / name
    path.write_bytes(drv.get_screenshot_as_png())
    return path


@pytest.fixture(scope="module")
def live():
    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    app = create_app({"TESTING": True}, provider)
    with _Server(app) as server:
        server.app = app
        server.provider = provider
        yield server


def test_page_loads_offline_without_errors_and_matches_the_api_grid(driver, live):
    _open(driver, live.url)
    _wait(driver, "return document.querySelectorAll('.alert').length === 2", what="alerts drawn")
    assert _severe_logs(driver) == []
    # Every resource the page loaded came from this server (or is an inline data: URL): fully offline.
    urls = driver.execute_script(
        "return performance.getEntriesByType('navigation').concat(performance.getEntriesByType('resource'))"
        ".map(e => e.name)"
    )
    assert urls, "no performance entries recorded"
    foreign = [u for u in urls if not (u.startswith(live.url) or u.startswith("data:"))]
    assert foreign == []
    assert any(u.endswith("/api/state") for u in urls)
    # One SVG path per cell, with the API's values in its data attributes.
    api = live.app.test_client().get("/api/state").get_json()
    polar = api["polar"]
    cells = driver.execute_script(
        "return Array.from(document.querySelectorAll('#layer-cells path.cell')).map(p => ["
        "Number(p.dataset.headingDeg), Number(p.dataset.speedKn), Number(p.dataset.utilisation), "
        "p.dataset.limiting, p.getAttribute('class')])"
    )
    assert len(cells) == len(polar["headings_deg"]) * len(polar["speeds_kn"]) == 72 * 23
    expected = {
        (h, v): (polar["utilisation"][i][j], polar["criteria"][polar["limiting"][i][j]]["key"])
        for i, h in enumerate(polar["headings_deg"])
        for j, v in enumerate(polar["speeds_kn"])
    }
    seen = {}
    for heading, speed, u, limiting, cls in cells:
        seen[(heading, speed)] = (u, limiting)
        assert ("band-over" in cls.split()) == (u > 1), (heading, speed, u, cls)
    assert seen == expected
    # The limit contour is traced between cell centres (marching squares, Lorensen & Cline 1987): every
    # vertex lies on a grid edge where the linear interpolation of the API's utilisation equals 1
    # (analytic check: linear interpolation along that edge, computed here from the API grid).
    grid = np.array(polar["utilisation"])
    hv = driver.execute_script(
        "return document.querySelector('#layer-limit .contour-limit').dataset.hv"
    )
    checked = _check_contour_vertices(hv, polar, grid, 1.0)
    assert checked > 20
    # Smooth lines, not a maze of cell edges: a few long pieces instead of one piece per cell edge.
    above = grid > 1
    edges = int((above != np.roll(above, -1, axis=0)).sum()) + int((above[:, :-1] != above[:, 1:]).sum())
    pieces = hv.count(";") + 1
    assert pieces < edges / 10, (pieces, edges)
    assert (
        driver.execute_script("return document.querySelectorAll('#layer-limit .contour-limit').length") == 1
    )
    assert (
        driver.execute_script("return document.querySelectorAll('#layer-overlays .overlay-over').length") == 1
    )
    zones = driver.execute_script(
        "return Array.from(document.querySelectorAll('#layer-overlays .zone'))"
        ".map(z => z.dataset.zone).sort()"
    )
    assert zones == sorted(k for k, grid in polar["zones"].items() if any(any(r) for r in grid))
    # Own ship, intended course and advised point are drawn as distinct shapes.
    marks = driver.execute_script(
        "return Array.from(document.querySelectorAll('#layer-marks [data-mark]'))"
        ".map(m => m.dataset.mark).sort()"
    )
    assert marks == ["advised", "intended-course", "own-ship"]
    arrows = driver.execute_script(
        "return Array.from(document.querySelectorAll('.wave-arrow')).map(a => Number(a.dataset.fromDeg))"
    )
    assert sorted(arrows) == sorted(s["wave_from_deg"] for s in api["sea_state"]["systems"])
    # The advice in large numerals, formatted 047° and 12.5 kn labelled STW.
    advice = driver.find_element("id", "box-advice").text
    assert f"{api['advice']['advised_heading_deg']:03.0f}°" in advice
    assert f"{api['advice']['advised_stw_kn']:.1f}" in advice and "STW" in advice
    assert api["advisory_notice"] in driver.find_element("id", "notice").text
    # Nothing moves except the tags of unacknowledged alerts (MSC.191(79) §5.5.4).
    moving = driver.execute_script(
        "return Array.from(document.querySelectorAll('*')).filter(e => {"
        " const c = getComputedStyle(e);"
        " return c.animationName !== 'none'"
        " || c.transitionDuration.split(',').some(t => parseFloat(t) > 0);"
        "}).map(e => e.className)"
    )
    assert moving and all(cls == "alert-tag" for cls in moving), moving
    assert len(moving) == driver.execute_script("return document.querySelectorAll('.alert.unacked').length")


def test_pointing_at_a_cell_shows_its_values_in_the_readout(driver, live):
    _open(driver, live.url)
    cell = driver.find_element(
        "css selector", '#layer-cells path.cell[data-heading-deg="0"][data-speed-kn="20"]'
    )
    driver.execute_script(
        "arguments[0].dispatchEvent(new PointerEvent('pointerover', {bubbles: true}))", cell
    )
    text = driver.find_element("id", "readout").text
    api = live.app.test_client().get("/api/state").get_json()["polar"]
    u = api["utilisation"][0][20]
    crit = api["criteria"][api["limiting"][0][20]]
    assert "000°" in text and "20.0 kn" in text
    assert f"{u:.2f}" in text
    assert crit["label"] in text
    assert "picked" in cell.get_attribute("class")
    _screenshot(driver, "bridge-readout.png")


def test_palettes_switch_persist_and_night_has_no_white_areas(driver, live):
    _open(driver, live.url)
    looks = {}
    for palette in ("day", "dusk", "night"):
        driver.find_element("css selector", f'.palette-switch button[data-palette="{palette}"]').click()
        looks[palette] = driver.execute_script(
            "const b = getComputedStyle(document.body);"
            "const p = getComputedStyle(document.getElementById('box-advice'));"
            "return [b.backgroundColor, p.backgroundColor, b.color,"
            " document.querySelector('#layer-cells path.cell').getAttribute('fill')]"
        )
        _wait(driver, "return document.querySelectorAll('.trend').length === 2", what="trend drawn")
        _screenshot(driver, f"bridge-{palette}.png")
    # Each palette looks different: panels, text and the cells' ramp all change; the page background
    # changes from day to dusk (dusk and night share black).
    for k in (1, 2, 3):
        assert len({looks[p][k] for p in looks}) == 3, looks
    assert looks["day"][0] != looks["dusk"][0]
    # Day is a light background; dusk and night are black backgrounds (IHO S-52 colour-table principle).
    assert _luminance(_parse_css_rgb(looks["day"][0])[0]) > 0.6
    assert _luminance(_parse_css_rgb(looks["dusk"][0])[0]) < 0.01
    assert _luminance(_parse_css_rgb(looks["night"][0])[0]) < 0.01
    # Night text is dimmer than dusk text.
    assert _luminance(_parse_css_rgb(looks["night"][2])[0]) < _luminance(_parse_css_rgb(looks["dusk"][2])[0])
    # The choice survives a reload (stored per display).
    driver.refresh()
    _wait(driver, "return document.body.classList.contains('palette-night')", what="night after reload")
    assert driver.execute_script("return localStorage.getItem('bridge.palette')") == "night"
    _wait(driver, "return document.querySelectorAll('#layer-cells path.cell').length > 0", what="cells")
    # No white areas at night: no element paints a light background, and no pixel of the screen is light.
    light = driver.execute_script(
        "return Array.from(document.querySelectorAll('*')).map(e => getComputedStyle(e).backgroundColor)"
        ".filter(c => c.startsWith('rgb'))"
    )
    # "Light" here: relative luminance above 0.2, a fifth of white (our own ceiling for the night palette).
    too_light = [c for c in light if _parse_css_rgb(c)[1] > 0 and _luminance(_parse_css_rgb(c)[0]) > 0.2]
    assert too_light == []
    from PIL import Image

    png = _screenshot(driver, "bridge-night-after-reload.png")
    with Image.open(io.BytesIO(png.read_bytes())) as img:
        pixels = np.asarray(img.convert("RGB"), dtype=float) / 255.0
    linear = np.where(pixels <= 0.04045, pixels / 12.92, ((pixels + 0.055) / 1.055) ** 2.4)
    lum = linear @ np.array([0.2126, 0.7152, 0.0722])  # WCAG 2.x relative luminance
    # Brightest pixel at night: well below white (0.2 relative luminance is our own ceiling).
    assert lum.max() < 0.2, f"brightest night pixel has relative luminance {lum.max():.3f}"
    # ...while the day screenshot has a light background.
    with Image.open(ARTIFACTS / "bridge-day.png") as img:
        corner = img.convert("RGB").getpixel((5, 500))
    assert _luminance(corner) > 0.6


def test_an_alert_can_be_acknowledged_from_the_page(driver, live):
    _open(driver, live.url)
    _wait(driver, "return document.querySelectorAll('.alert.unacked').length >= 1", what="unacked alert")
    alert_id = driver.execute_script("return document.querySelector('.alert.unacked').dataset.alertId")
    # Without a name the page asks for one and records nothing.
    driver.find_element("css selector", f'.ack-button[data-alert-id="{alert_id}"]').click()
    assert "On watch" in driver.find_element("id", "alerts-message").text
    assert not live.provider.alerts()[int(alert_id) - 1]["acknowledged"]
    # Unacknowledged alerts flash (the only animation on the page).
    assert (
        driver.execute_script(
            "return getComputedStyle(document.querySelector('.alert.unacked .alert-tag')).animationName"
        )
        == "flash"
    )
    field = driver.find_element("id", "watch-user")
    field.send_keys("Second Officer A. Example")
    driver.find_element("css selector", f'.ack-button[data-alert-id="{alert_id}"]').click()
    _wait(
        driver,
        f"return document.querySelector('.alert[data-alert-id=\"{alert_id}\"]').classList.contains('acked')",
        what="alert shown as acknowledged",
    )
    row = driver.find_element("css selector", f'.alert[data-alert-id="{alert_id}"]').text
    assert "Second Officer A. Example" in row
    stored = [a for a in live.provider.alerts() if a["id"] == int(alert_id)][0]
    assert stored["acknowledged"] and stored["acknowledged_by"] == "Second Officer A. Example"
    assert stored["acknowledged_utc"] == "2026-12-01T03:00:00Z"  # the fixture clock
    assert (
        driver.execute_script(
            "return getComputedStyle(document.querySelector("
            f"'.alert[data-alert-id=\"{alert_id}\"] .alert-tag'))"
            ".animationName"
        )
        == "none"
    )
    assert _severe_logs(driver) == []


def test_stale_data_is_shown_as_stale_and_old_advice_is_not_shown(driver):
    provider = make_provider(scenario="stale", clock=lambda: NOW)
    with _Server(create_app({"TESTING": True}, provider)) as server:
        _open(driver, server.url)
        _wait(
            driver,
            "return document.getElementById('box-ship').classList.contains('stale')",
            what="stale ship",
        )
        advice = driver.find_element("id", "box-advice").text
        assert "NO CURRENT ADVICE" in advice
        assert "sea-state estimate is 50 min old" in advice
        assert driver.find_elements("css selector", "#box-advice .big-num") == []
        assert "STALE" in driver.find_element("id", "ship-age").text
        assert "STALE" in driver.find_element("id", "sea-age").text
        banner = driver.find_element("id", "chart-banner")
        assert banner.is_displayed() and "STALE" in banner.text
        assert "stale" in driver.find_element("id", "chart-wrap").get_attribute("class")
        assert (
            driver.execute_script("return document.querySelectorAll('[data-mark=\"advised\"]').length") == 0
        )
        _screenshot(driver, "bridge-stale.png")
        assert _severe_logs(driver) == []


def test_no_advice_says_why_plainly(driver):
    provider = make_provider(scenario="no_advice", clock=lambda: NOW)
    with _Server(create_app({"TESTING": True}, provider)) as server:
        _open(driver, server.url, palette="dusk")
        _wait(
            driver,
            "return document.getElementById('advice-body').textContent.includes('NO CURRENT ADVICE')",
            what="no advice",
        )
        text = driver.find_element("id", "box-advice").text
        assert "sensors silent: roll_deg, pitch_deg since 02:41Z" in text
        assert driver.execute_script("return document.querySelectorAll('#layer-cells path.cell').length") == 0
        assert "NO CHART" in driver.find_element("id", "chart-banner").text
        # Own heading and speed are still known and drawn; there is no advised point to draw.
        marks = driver.execute_script(
            "return Array.from(document.querySelectorAll('#layer-marks [data-mark]'))"
            ".map(m => m.dataset.mark)"
        )
        assert sorted(marks) == ["intended-course", "own-ship"]
        sensors = driver.find_element("id", "box-sensors").text
        assert "SILENT" in sensors
        _screenshot(driver, "bridge-no-advice-dusk.png")
        assert _severe_logs(driver) == []


def test_the_page_follows_new_states_without_reload_and_says_when_the_link_is_lost(driver):
    clock = {"now": datetime.now(UTC).replace(microsecond=0)}
    provider = make_provider(clock.get("now"), clock=lambda: clock["now"])
    app = create_app(
        {"TESTING": True, "BRIDGE_POLL_INTERVAL_MS": 500, "BRIDGE_CONNECTION_LOST_AFTER_MS": 1500}, provider
    )
    server = _Server(app)
    with server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('[data-mark=\"own-ship\"]') !== null", what="own ship")
        driver.execute_script("window.__marker = 1;")  # survives only if the page is not reloaded
        from web_fixtures import build_state

        state = build_state(clock["now"])
        state["ship"]["heading_deg"] = 100.0
        state["ship"]["time_utc"] = (clock["now"] - timedelta(seconds=1)).isoformat().replace("+00:00", "Z")
        provider.set_state(state)
        _wait(
            driver,
            "return document.querySelector('[data-mark=\"own-ship\"]').dataset.headingDeg === '100'",
            what="new heading drawn",
        )
        assert driver.execute_script("return window.__marker") == 1
        # 304s while nothing changes: the page sends the ETag back and the server honours it.
        _wait(
            driver,
            "return performance.getEntriesByType('resource').filter(e => e.name.endsWith('/api/state'))"
            ".some(e => e.responseStatus === 304)",
            timeout=5,
            what="a 304 answer to a poll",
        )
        assert "100°" in driver.find_element("id", "box-ship").text
    # The server is gone: the page says so and withdraws the advice.
    _wait(
        driver,
        "return document.getElementById('link-state').dataset.link === 'lost'",
        timeout=10,
        what="link lost",
    )
    assert "NO CONNECTION" in driver.find_element("id", "link-state").text
    _wait(
        driver,
        "return document.getElementById('advice-body').textContent.includes('NO CURRENT ADVICE')",
        what="advice withdrawn",
    )


def test_the_page_ages_data_between_answers_and_withdraws_advice_when_stale(driver):
    # The server's clock is frozen, so it keeps answering 304 with own-ship data "1 s old"; the page must
    # advance the age itself from its last full answer and apply stale_after_s (3 s here) on its own.
    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3.0)
    app = create_app(
        {"TESTING": True, "BRIDGE_POLL_INTERVAL_MS": 500, "BRIDGE_CONNECTION_LOST_AFTER_MS": 5000}, provider
    )
    with _Server(app) as server:
        _open(driver, server.url)
        _wait(
            driver,
            "return document.getElementById('advice-body').textContent.includes('Suggest altering to')",
            what="advice",
        )
        assert not driver.execute_script(
            "return document.getElementById('box-ship').classList.contains('stale')"
        )
        _wait(
            driver,
            "return document.getElementById('box-ship').classList.contains('stale')",
            timeout=8,
            what="own ship aged past 3 s by the page",
        )
        assert "STALE" in driver.find_element("id", "ship-age").text
        text = driver.find_element("id", "box-advice").text
        assert "NO CURRENT ADVICE" in text and "own heading and speed are" in text
        assert driver.execute_script("return document.getElementById('link-state').dataset.link") == "live"


# ------------------------------------------------------------------------ readable at a glance (issue 14)

SIZES = ((1400, 900), (1920, 1080))


def _size(drv, width, height):
    drv.execute_cdp_cmd(
        "Emulation.setDeviceMetricsOverride",
        {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False},
    )


def _served(provider):
    return _Server(create_app({"TESTING": True}, provider))


def test_every_palette_and_size_fits_without_scrolling_and_labels_are_not_clipped(driver, live):
    try:
        for width, height in SIZES:
            _size(driver, width, height)
            for palette in ("day", "dusk", "night"):
                _open(driver, live.url, palette)
                _wait(driver, "return document.querySelectorAll('.trend').length === 2", what="trend drawn")
                # Nothing scrolls: the page, the deck and each column hold their content (1 px rounding).
                over = driver.execute_script(
                    "return Array.from(document.querySelectorAll('body, .deck, .chart-side, .side'))"
                    ".filter(e => e.scrollHeight > e.clientHeight + 1 || e.scrollWidth > e.clientWidth + 1)"
                    ".map(e => [e.className, e.scrollHeight, e.clientHeight])"
                )
                assert over == [], (width, height, palette, over)
                # Every box is inside the window (nothing below the fold).
                below = driver.execute_script(
                    "return Array.from(document.querySelectorAll('.box, #key, #readout, #notice'))"
                    ".filter(e => e.getBoundingClientRect().bottom > window.innerHeight + 0.5)"
                    ".map(e => e.id || e.className)"
                )
                assert below == [], (width, height, below)
                # Chart labels lie inside the drawn chart (never cut off by its edge).
                clipped = driver.execute_script(
                    "const s = document.getElementById('polar').getBoundingClientRect();"
                    "return Array.from(document.querySelectorAll('#polar text')).filter(t => {"
                    " const r = t.getBoundingClientRect();"
                    " return r.width > 0 && (r.left < s.left - 0.5 || r.right > s.right + 0.5 ||"
                    "  r.top < s.top - 0.5 || r.bottom > s.bottom + 0.5); }).map(t => t.textContent)"
                )
                assert clipped == [], (width, height, clipped)
                _screenshot(driver, f"bridge-{palette}-{width}x{height}.png")
    finally:
        _size(driver, 1920, 1080)


def test_zones_off_nothing_covers_the_colour_scale_and_the_switch_fills_them(driver, live):
    _open(driver, live.url)
    assert driver.execute_script("return localStorage.getItem('bridge.zoneFill')") in (None, "off")
    assert driver.execute_script("return getComputedStyle(document.getElementById('layer-overlays')).display") == "none"
    # Every painted area over the cells other than lines and small marks: filled shapes (non-none fill,
    # visible) outside the cell layer, with their on-screen area. Lines (fill none) cover a hairline only.
    covering = driver.execute_script(
        "const out = [];"
        "for (const e of document.querySelectorAll('#polar *')) {"
        " if (e.closest('#layer-cells') || e.closest('defs')) continue;"
        " const c = getComputedStyle(e);"
        " if (c.display === 'none' || c.fill === 'none' || c.visibility === 'hidden') continue;"
        " if (!['path', 'rect', 'circle', 'polygon', 'ellipse'].includes(e.tagName)) continue;"
        " const r = e.getBoundingClientRect(); if (r.width * r.height === 0) continue;"
        " if (e.closest('[style*=\"display: none\"]') || e.getClientRects().length === 0) continue;"
        " out.push([e.getAttribute('class'), Math.round(r.width * r.height)]); }"
        "return out;"
    )
    # Our own ceiling: each filled shape over the chart (own-ship hull, speed-label tags, arrowheads)
    # covers under 1 % of the disc, all of them together under 3 % (their bounding boxes, generous).
    rim = driver.execute_script("const r = document.querySelector('.grid-rim').getBoundingClientRect(); return r.width")
    disc = np.pi * (rim / 2) ** 2
    assert all(area < 0.01 * disc for _cls, area in covering), (covering, disc)
    assert sum(area for _cls, area in covering) < 0.03 * disc, (covering, disc)
    zones = driver.execute_script(
        "return Array.from(document.querySelectorAll('#layer-zones .zone-outline')).map(z => z.dataset.zone).sort()"
    )
    polar = live.app.test_client().get("/api/state").get_json()["polar"]
    assert zones == sorted(k for k, grid in polar["zones"].items() if any(any(r) for r in grid))
    assert all(
        driver.execute_script(f"return document.querySelector('.zone-outline-{z} .zone-name') !== null")
        for z in zones
    )
    driver.find_element("id", "zone-fill").click()
    _wait(driver, "return document.getElementById('chart-wrap').classList.contains('zones-filled')", what="fill on")
    assert driver.execute_script("return getComputedStyle(document.getElementById('layer-overlays')).display") != "none"
    assert driver.find_element("id", "zone-fill").get_attribute("aria-pressed") == "true"
    _screenshot(driver, "bridge-zone-fill-on.png")
    driver.find_element("id", "zone-fill").click()
    _wait(driver, "return !document.getElementById('chart-wrap').classList.contains('zones-filled')", what="fill off")


def test_readout_and_suggestion_use_advisory_wording(driver, live):
    _open(driver, live.url)
    _wait(driver, "return document.getElementById('advice-body').textContent.includes('Suggest altering to')", what="advice")
    box = driver.find_element("id", "box-advice").text
    assert "SUGGESTED" in box and "CHANGE TO" not in box and "KEEP" not in box
    cell = driver.find_element("css selector", '#layer-cells path.cell[data-heading-deg="180"][data-speed-kn="5"]')
    driver.execute_script("arguments[0].dispatchEvent(new PointerEvent('pointerover', {bubbles: true}))", cell)
    text = driver.find_element("id", "readout").text
    assert "screening only" in text and "Circ.1228 zone" not in text and "ample room" not in text


def test_low_confidence_shows_a_smaller_qualified_suggestion_with_checks_by_eye(driver):
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)
    state["sea_state"].update(confidence=0.19, confidence_level="low", confidence_reasons=["short window"])
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('#box-advice .advice-check') !== null", what="check list")
        text = driver.find_element("id", "box-advice").text
        assert "Low confidence" in text and "0.19" in text and "Check by eye" in text
        assert "050°" in text  # the wave direction the officer should see
        assert driver.find_elements("css selector", "#box-advice .big-num") == []
        _screenshot(driver, "bridge-low-confidence.png")
        size = driver.execute_script(
            "return parseFloat(getComputedStyle(document.querySelector('#box-advice .mid-num')).fontSize)"
        )
    with _served(make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('#box-advice .big-num') !== null", what="big numbers")
        big = driver.execute_script(
            "return parseFloat(getComputedStyle(document.querySelector('#box-advice .big-num')).fontSize)"
        )
    assert size < 0.7 * big


def test_turn_direction_and_speed_cap_are_drawn_when_the_advisor_sends_them(driver):
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)
    state["advice"].update(turn_direction="port", attainable_stw_kn=13.0)
    state["polar"]["attainable_stw_kn"] = [18.0 - 4.0 * abs(np.cos(np.radians(h - 50.0))) for h in state["polar"]["headings_deg"]]
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('[data-mark=\"turn\"]') !== null", what="turn arc")
        assert driver.execute_script("return document.querySelector('[data-mark=\"turn\"]').dataset.turn") == "port"
        assert driver.execute_script("return document.querySelector('[data-mark=\"speed-cap\"]') !== null")
        text = driver.find_element("id", "box-advice").text
        assert "turning to port" in text and "attainable ≤ 13.0 kn" in text
        _screenshot(driver, "bridge-turn-and-cap.png")
        assert _severe_logs(driver) == []


def test_identified_roll_period_and_gm_caution_show_in_the_condition_box(driver):
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)  # fixture (invented): measured 13.0 s vs 14.4 s, implied GM 1.36 vs 1.1 m
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('.roll-identified') !== null", what="identified roll")
        text = driver.find_element("id", "box-condition").text
        assert "roll period measured 13.0 s (condition 14.4 s)" in text  # fixture values, one decimal
        assert "Check the loading computer" in text and "1.36 m" in text
        # without the GM warning only the period line shows; without the optional field, nothing
        state["sea_state"]["roll"]["gm_warning"] = False
        provider.set_state(state)
        _wait(driver, "return document.querySelector('.roll-gm-warning') === null", what="caution gone")
        assert driver.find_elements("css selector", ".roll-identified")
        del state["sea_state"]["roll"]
        provider.set_state(state)
        _wait(driver, "return document.querySelector('.roll-identified') === null", what="roll line gone")
        assert _severe_logs(driver) == []


def test_alert_states_rectified_and_aggregated_on_the_page(driver):
    from onboard.live.alerts import NO_ADVICE_TAIL

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    silent = "Warning: sensors silent: roll_deg since 02:41Z." + NO_ADVICE_TAIL
    ids = [
        provider.raise_alert(level="warning", kind="sensors", text=silent, raised_utc=NOW - timedelta(minutes=m))
        for m in (30, 20, 10)
    ]
    for i in ids:
        provider.clear_alert(i, when=NOW - timedelta(minutes=5))
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('.alert[data-state=\"rectified_unacknowledged\"]') !== null", what="rectified")
        row = driver.find_element("css selector", '.alert[data-state="rectified_unacknowledged"]')
        assert row.get_attribute("data-count") == "3"
        assert "RECTIFIED 02:55Z" in row.text and "×3" in row.text and "No advice" not in row.text
        assert "rectified" in row.get_attribute("class") and "unacked" not in row.get_attribute("class")
        _screenshot(driver, "bridge-alert-rectified.png")
        states = driver.execute_script(
            "return Array.from(document.querySelectorAll('.alert')).map(a => a.dataset.state).sort()"
        )
        assert states == ["active_unacknowledged", "active_unacknowledged", "rectified_unacknowledged"]
        # Acknowledging the row acknowledges the three alerts behind it; it then leaves the list.
        driver.find_element("id", "watch-user").send_keys("Second Officer A. Example")
        row.find_element("css selector", ".ack-button").click()
        _wait(driver, "return document.querySelector('.alert[data-state=\"rectified_unacknowledged\"]') === null", what="acknowledged")
        assert all(a["acknowledged"] for a in provider.alerts() if a["id"] in ids) or not [
            a for a in provider.alerts() if a["id"] in ids
        ]
        # An active alert acknowledged stays, steady, as active-acknowledged.
        driver.find_element("css selector", '.alert[data-state="active_unacknowledged"] .ack-button').click()
        _wait(driver, "return document.querySelector('.alert[data-state=\"active_acknowledged\"]') !== null", what="active acked")
        assert driver.execute_script(
            "return getComputedStyle(document.querySelector('.alert[data-state=\"active_acknowledged\"] .alert-tag')).animationName"
        ) == "none"
        _screenshot(driver, "bridge-alert-states.png")
        # Many different alerts: at most three rows, the rest counted, and the column still fits 1400 × 900.
        for k in range(5):
            provider.raise_alert(level="caution", kind="sensors", text=f"Caution: channel {k} implausible.")
        try:
            _size(driver, 1400, 900)
            _wait(driver, "return document.querySelector('.alerts-more') !== null", what="more alerts")
            assert driver.execute_script("return document.querySelectorAll('.alert').length") == 3
            assert driver.execute_script(
                "return Array.from(document.querySelectorAll('.side')).every(e => e.scrollHeight <= e.clientHeight + 1)"
            )
            _screenshot(driver, "bridge-many-alerts-1400x900.png")
        finally:
            _size(driver, 1920, 1080)


def test_unreachable_broker_topic_ages_and_rejects_on_the_page(driver):
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)
    state["link"] = {
        "broker": "192.0.2.1:1883",
        "connected": False,
        "down_for_s": 125.0,
        "problem": "broker not reachable (no answer or connection refused)",
        "topics": [{"topic": "hw/tern/samples/imu", "age_s": 130.0}],
        "rejected": {"bad_json": 2, "out_of_range": 1},
    }
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.getElementById('link-body').dataset.broker === 'down'", what="link")
        text = driver.find_element("id", "link-body").text
        assert "NOT REACHABLE" in text and "192.0.2.1:1883" in text
        assert "samples/imu" in text and "bad_json 2" in text and "out_of_range 1" in text


# Night: the brightest element anywhere stays below this relative luminance (WCAG 2.x definition; our own
# ceiling, about a seventh of white, tighter than the 0.2 of the screenshot check above; the night ink
# is at 0.13). Text, backgrounds, borders, outlines, SVG fills and strokes of every visible element.
NIGHT_MAX_LUMINANCE = 0.15


def _bright_elements(drv, limit):
    colours = drv.execute_script(
        "const out = [];"
        "for (const e of document.querySelectorAll('body, body *')) {"
        " const r = e.getBoundingClientRect(); if (r.width === 0 || r.height === 0) continue;"
        " const c = getComputedStyle(e); if (c.visibility === 'hidden' || c.display === 'none') continue;"
        " const props = ['backgroundColor', 'borderTopColor', 'outlineColor'];"
        " if (e.childNodes.length && Array.from(e.childNodes).some(n => n.nodeType === 3 && n.textContent.trim())) props.push('color');"
        " if (e instanceof SVGElement) { props.push('fill', 'stroke'); }"
        " for (const p of props) { const v = c[p];"
        "  if (p === 'borderTopColor' && parseFloat(c.borderTopWidth) === 0) continue;"
        "  if (p === 'outlineColor' && c.outlineStyle === 'none') continue;"
        "  if (v && v.startsWith('rgb')) out.push([e.tagName + '.' + (e.getAttribute('class') || e.id), p, v]); } }"
        "return out;"
    )
    bright = []
    for name, prop, value in colours:
        rgb, alpha = _parse_css_rgb(value)
        if alpha > 0 and _luminance(rgb) > limit:
            bright.append((name, prop, value))
    return bright


def test_night_palette_has_no_bright_element_on_the_page_or_the_admin_pages(driver, live):
    _open(driver, live.url, "night")
    _wait(driver, "return document.querySelectorAll('.trend').length === 2", what="trend drawn")
    assert _bright_elements(driver, NIGHT_MAX_LUMINANCE) == []
    # Scrollbars take the palette's colours (the browser's own track is light grey).
    assert driver.execute_script("return getComputedStyle(document.querySelector('.side')).scrollbarColor") != "auto"
    # A focused control shows a dim ring, not the browser's bright one.
    driver.find_element("id", "watch-user").click()
    assert _bright_elements(driver, NIGHT_MAX_LUMINANCE) == []
    # The administration pages follow the palette chosen on this display.
    driver.get(live.url + "admin/")
    _wait(driver, "return document.documentElement.dataset.palette === 'night'", what="admin at night")
    assert _bright_elements(driver, NIGHT_MAX_LUMINANCE) == []
    from PIL import Image

    png = _screenshot(driver, "admin-night.png")
    with Image.open(io.BytesIO(png.read_bytes())) as img:
        pixels = np.asarray(img.convert("RGB"), dtype=float) / 255.0
    linear = np.where(pixels <= 0.04045, pixels / 12.92, ((pixels + 0.055) / 1.055) ** 2.4)
    assert (linear @ np.array([0.2126, 0.7152, 0.0722])).max() < NIGHT_MAX_LUMINANCE
    driver.get(live.url)
    driver.execute_script("localStorage.clear();")


@pytest.mark.slow
def test_demo_prints_a_login_that_works_and_the_conditions_page_lists_the_stored_conditions(driver, tmp_path):
    import re

    from onboard.live import service as svc

    out = tmp_path / "demo"
    (out / "replay").mkdir(parents=True)
    # A stand-in for the replay report of the demo voyage (hwadvice replay ... --report writes the real one).
    (out / "replay" / "report.html").write_text("<!doctype html><title>replay report</title><p id='r'>report</p>")
    ready: dict = {}
    lines: list[str] = []
    stop = threading.Event()
    th = threading.Thread(
        target=svc.run_demo,
        kwargs=dict(
            out_dir=out, port=0, speedup=60.0, hours=0.6, stop=stop, echo=lines.append,
            on_ready=lambda url, service: ready.setdefault("url", url),
        ),
        daemon=True,
    )
    th.start()
    try:
        end = time.monotonic() + 120.0  # generous: waits for the page, asserts no duration
        while "url" not in ready and time.monotonic() < end and th.is_alive():
            time.sleep(0.2)
        assert "url" in ready, lines
        url = ready["url"]
        login = [line for line in lines if line.startswith("demo login")]
        assert login, lines
        m = re.search(r"user (\S+), one-time password (\S+)", login[0])
        assert m and m.group(1) == svc.DEMO_USER
        assert any(line.startswith("conditions stored with their limit sets:") for line in lines)
        _open(driver, url)
        notice = driver.find_element("id", "notice").text
        assert "Demo only" in notice and svc.DEMO_USER in notice
        assert driver.find_element("id", "report-link").get_attribute("href").endswith("/report")
        driver.get(url + "report")
        assert driver.find_element("id", "r").text == "report"
        # Log in with the printed password; the conditions page shows the stored conditions.
        driver.get(url + "admin/login")
        driver.find_element("name", "username").send_keys(m.group(1))
        driver.find_element("name", "password").send_keys(m.group(2))
        driver.find_element("css selector", "#login-form button[type=submit]").click()
        _wait(driver, "return document.getElementById('who') && document.getElementById('who').textContent.includes('editor')", what="logged in")
        driver.get(url + "admin/")
        page = driver.find_element("tag name", "body").text
        assert "No conditions stored yet" not in page
        assert "deep laden, low GM" in page  # a loading condition of config/demo_vessel.toml
        assert driver.find_element("id", "demo-note").is_displayed()
        _screenshot(driver, "demo-admin.png")
        # A wrong password is refused (the printed one is the only way in).
        driver.get(url + "admin/login")
        driver.find_element("name", "username").send_keys(m.group(1))
        driver.find_element("name", "password").send_keys("not-the-password")
        driver.find_element("css selector", "#login-form button[type=submit]").click()
        _wait(driver, "return document.getElementById('login-error') !== null", what="refused")
    finally:
        stop.set()
        th.join(30)
        driver.get("about:blank")
    assert not th.is_alive()


# ------------------------------------------------------------------ the watch's visual estimate (issue 15)


def _observed(now, *, fallback=None):
    """A visual estimate entered 20 min before ``now`` by user ``oow`` (invented demo values)."""
    return {
        "entered_utc": (now - timedelta(minutes=20)).isoformat().replace("+00:00", "Z"),
        "entered_by": "oow",
        "age_s": 1200.0,
        "note": "crests breaking on the port bow",
        "systems": [
            {"label": "wind sea", "hs_m": 3.5, "period_s": 8.0, "wave_from_deg": 40.0},
            {"label": "swell", "hs_m": 3.0, "period_s": 12.0, "wave_from_deg": 80.0},
        ],
        "fallback_advice": fallback,
    }


def _admin_config(tmp_path):
    from admin_fixtures import FAST_HASH, VESSEL_FILE

    from onboard.core.store import make_engine

    engine = make_engine(f"sqlite:///{tmp_path / 'admin.db'}")
    return {"TESTING": True, "ADMIN_DB": engine, "ADMIN_VESSEL": VESSEL_FILE, "ADMIN_PASSWORD_METHOD": FAST_HASH}


def test_the_watchs_visual_estimate_is_shown_beside_the_estimate_in_every_palette(driver, tmp_path):
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)
    state["observed_sea"] = _observed(NOW)
    provider.set_state(state)
    with _Server(create_app(_admin_config(tmp_path), provider)) as server:
        try:
            _size(driver, 1400, 900)  # the tightest supported screen: nothing may scroll
            for palette in ("day", "dusk", "night"):
                _open(driver, server.url, palette)
                _wait(driver, "return document.querySelector('#box-sea .obs-row') !== null", what="observed rows")
                sea = driver.find_element("id", "box-sea").text
                # Who entered it, when, how old (age_s 1200 s advanced by the page: 20 min), and per system.
                assert "BY EYE" in sea and "oow" in sea and "02:40Z" in sea and "20 min old" in sea
                rows = driver.execute_script(
                    "return Array.from(document.querySelectorAll('#box-sea .obs-row'))"
                    ".map(r => Array.from(r.cells).slice(0, 4).map(c => c.textContent))"
                )
                assert rows == [["wind sea", "3.5 m", "8 s", "040°"], ["swell", "3.0 m", "12 s", "080°"]]
                # Beside the estimate: the estimate's two systems are still in the same table, above.
                assert driver.execute_script(
                    "return document.querySelectorAll('#box-sea table.systems').length"
                ) == 1
                assert "used for the advice" not in sea  # the motions are in use
                over = driver.execute_script(
                    "return Array.from(document.querySelectorAll('body, .deck, .chart-side, .side'))"
                    ".filter(e => e.scrollHeight > e.clientHeight + 1 || e.scrollWidth > e.clientWidth + 1)"
                    ".map(e => [e.className, e.scrollHeight, e.clientHeight])"
                )
                _screenshot(driver, f"bridge-observed-{palette}-1400x900.png")
                assert over == [], (palette, over)  # common practice: a bridge screen is read without scrolling
                if palette == "night":
                    assert _bright_elements(driver, NIGHT_MAX_LUMINANCE) == []
            # The entry page is one click away when the service keeps logins (its form shows after a login).
            assert _severe_logs(driver) == []
            link = driver.find_element("id", "observed-link")
            assert link.is_displayed() and link.get_attribute("href").endswith("/admin/observed-sea")
            link.click()
            _wait(driver, "return document.getElementById('observed-current') !== null", what="entry page")
        finally:
            _size(driver, 1920, 1080)
            driver.get(server.url)
            driver.execute_script("localStorage.clear();")


def test_when_the_motions_cannot_be_used_the_suggestion_says_it_is_scored_in_the_observed_sea(driver):
    from web_fixtures import build_state

    provider = make_provider(scenario="no_advice", clock=lambda: NOW)
    state = build_state(NOW, scenario="no_advice")
    fallback = {
        "computed_utc": "2026-12-01T02:59:00Z",
        "status": "change",
        "sentence": "From the watch's visual estimate, not from the motions: Alter to 230°.",
        "advised_heading_deg": 230.0,
        "advised_stw_kn": 11.0,
        "utilisation_now": 0.97,
        "binding_limit": "Roll (significant amplitude)",
    }
    state["observed_sea"] = _observed(NOW, fallback=fallback)
    provider.set_state(state)
    with _served(provider) as server:
        try:
            _size(driver, 1400, 900)
            _open(driver, server.url, "night")
            _wait(driver, "return document.querySelector('#box-advice .advice-observed') !== null", what="fallback")
            advice = driver.find_element("id", "box-advice").text
            assert "NO ADVICE FROM THE MOTIONS" in advice
            assert "Scored in the sea observed by eye (oow, 02:40Z), not in measured motions" in advice
            assert "230°" in advice and "11.0" in advice and "utilisation now 0.97" in advice
            sea = driver.find_element("id", "box-sea").text
            assert "NO ESTIMATE" in sea and "used for the advice" in sea and "3.5 m" in sea
            assert driver.find_element("id", "observed-link").is_displayed() is False  # no logins kept here
            over = driver.execute_script(
                "return Array.from(document.querySelectorAll('body, .deck, .chart-side, .side'))"
                ".filter(e => e.scrollHeight > e.clientHeight + 1 || e.scrollWidth > e.clientWidth + 1)"
                ".map(e => [e.className, e.scrollHeight, e.clientHeight])"
            )
            _screenshot(driver, "bridge-observed-fallback-night-1400x900.png")
            assert over == [], over
            assert _bright_elements(driver, NIGHT_MAX_LUMINANCE) == []
            _open(driver, server.url, "day")
            _wait(driver, "return document.querySelector('#box-advice .advice-observed') !== null", what="fallback")
            _screenshot(driver, "bridge-observed-fallback-day-1400x900.png")
            assert _severe_logs(driver) == []
        finally:
            _size(driver, 1920, 1080)
            driver.execute_script("localStorage.clear();")


def test_the_sea_the_advice_used_shows_in_the_sea_state_box(driver):
    # optional sea_state.advice_sea (openapi State): the advice was worked out in several windows'
    # estimates combined (estimator.fusion); the page shows the sentence, and nothing without the field
    from test_service import schema
    from web_fixtures import build_state

    provider = make_provider(clock=lambda: NOW, ship_stale_after_s=3600.0)
    state = build_state(NOW)
    sentence = "Advice uses the last 3 estimates combined: Hs 4.9 m (up to 5.8 m)."
    state["sea_state"]["advice_sea"] = {"hs_m": 4.9, "hs_p95_m": 5.8, "estimates": 3, "sentence": sentence}
    schema("State").validate(state)
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('.sea-advice') !== null", what="advice sea line")
        assert driver.find_element("css selector", ".sea-advice").text == sentence
        del state["sea_state"]["advice_sea"]
        provider.set_state(state)
        _wait(driver, "return document.querySelector('.sea-advice') === null", what="advice sea line gone")
        assert _severe_logs(driver) == []


def test_the_chart_scored_in_the_sea_observed_by_eye_has_its_own_banner(driver):
    # optional observed_sea.fallback_polar (openapi ObservedSea): no chart from the motions, but one scored
    # in the watch's visual estimate; the page draws it under a banner naming its source, not greyed
    from test_service import schema
    from web_fixtures import build_state

    provider = make_provider(scenario="no_advice", clock=lambda: NOW)
    state = build_state(NOW, scenario="no_advice")
    eye_polar = build_state(NOW)["polar"]  # fixture grid (invented values), as if scored in the observed sea
    state["observed_sea"] = _observed(NOW, fallback=None)
    state["observed_sea"]["fallback_polar"] = eye_polar
    schema("State").validate(state)
    provider.set_state(state)
    with _served(provider) as server:
        _open(driver, server.url)
        _wait(driver, "return document.querySelector('.chart-banner-eye') !== null", what="eye banner")
        banner = driver.find_element("id", "chart-banner").text
        assert banner.startswith("CHART FROM THE SEA OBSERVED BY EYE (oow, 02:40Z)")
        assert "not from measured motions" in banner
        assert "stale" not in driver.find_element("id", "chart-wrap").get_attribute("class")
        n_cells = driver.execute_script("return document.querySelectorAll('.cell').length")
        assert n_cells == len(eye_polar["headings_deg"]) * len(eye_polar["speeds_kn"])
        # without it: no chart, as before
        state["observed_sea"]["fallback_polar"] = None
        provider.set_state(state)
        _wait(driver, "return document.querySelector('.chart-banner-none') !== null", what="no chart banner")
        assert _severe_logs(driver) == []
