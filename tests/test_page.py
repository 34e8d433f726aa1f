"""The design page (`ductgen design`) in a real headless browser: Debian's chromium driven by
selenium through chromedriver. Skipped locally without chromium; a failure under CI=true.

The server is started the way a user starts it (``ductgen design SPEC --no-browser``, here
with ``--port 0`` so the test gets a free port) in its own process.
"""

from __future__ import annotations

import http.client
import json
import math
import os
import re
import shutil
import subprocess
import sys
import tempfile
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import numpy as np
import pytest
import tomllib

from ductgen.spec import load_spec
from tests.browser import (
    auth_header,
    field_of,
    get_json,
    open_page,
    save_shot,
    text_of,
    type_id,
    type_key,
    wait_until,
)
from tests.conftest import CHROMIUM_FLAGS

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "samples" / "club-racer-brake.toml"
_DESIGN = [sys.executable, "-m", "ductgen", "design"]
FLAGS = CHROMIUM_FLAGS


def _need(path: str | None, what: str) -> str:
    if path is None:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail(f"{what} is missing under CI: .ci/run installs chromium chromium-driver")
        pytest.skip(f"{what} not installed (apt-get install chromium chromium-driver)")
    return path


def checkout_env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


@pytest.fixture(scope="module")
def page_out(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return tmp_path_factory.mktemp("page-build")


@pytest.fixture(scope="module")
def server(page_out: Path):  # type: ignore[no-untyped-def]
    """`ductgen design samples/club-racer-brake.toml --no-browser` on a free port: its URL."""
    yield from serve_design(SAMPLE, page_out, "-o", str(page_out))


def start_design(spec: Path, cwd: Path, *extra: str) -> tuple[subprocess.Popen[str], list[str]]:
    """``ductgen design SPEC --no-browser --port 0 EXTRA`` started in ``cwd`` as a user starts
    it: the process and the first two lines it prints (a greeting, then the address)."""
    cmd = [sys.executable, "-m", "ductgen", "design", str(spec), "--no-browser", "--port", "0"]
    proc = subprocess.Popen(
        [*cmd, *extra],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=checkout_env(),
        cwd=cwd,
    )
    assert proc.stdout is not None
    return proc, [proc.stdout.readline(), proc.stdout.readline()]


def serve_design(spec: Path, cwd: Path, *extra: str) -> Iterator[str]:
    """:func:`start_design`; yields the address it prints on a line of its own (with its key)
    and stops it."""
    proc, lines = start_design(spec, cwd, *extra)
    try:
        m = re.fullmatch(r"http://127\.0\.0\.1:(\d+)/\?token=\S+\n", lines[-1])
        assert m, f"no address printed: {lines!r} {proc.stderr.read() if proc.stderr else ''}"
        yield m.group(0).strip()
    finally:
        proc.terminate()
        proc.wait(timeout=30)


@pytest.fixture(scope="module")
def browser():  # type: ignore[no-untyped-def]
    yield from chromium()


def chromium():  # type: ignore[no-untyped-def]
    """Headless Chromium through chromedriver, in a profile of its own (a generator: the
    browser, then it is closed)."""
    exe = _need(shutil.which("chromium") or _exists("/usr/bin/chromium"), "chromium")
    drv = _need(shutil.which("chromedriver") or _exists("/usr/bin/chromedriver"), "chromedriver")
    from selenium import webdriver
    from selenium.webdriver.chrome.service import Service

    opts = webdriver.ChromeOptions()
    opts.binary_location = exe
    for a in FLAGS:
        opts.add_argument(a)
    profile = tempfile.mkdtemp(prefix="ductgen-page-chromium-")
    opts.add_argument(f"--user-data-dir={profile}")
    opts.add_argument("--window-size=1280,800")
    d = webdriver.Chrome(options=opts, service=Service(drv))
    d.set_script_timeout(30)
    yield d
    d.quit()
    shutil.rmtree(profile, ignore_errors=True)


def _exists(p: str) -> str | None:
    return p if Path(p).exists() else None


def _shown_mm(d, num: str) -> float:  # type: ignore[no-untyped-def]
    """The number shown in the key-numbers block (text like '284.25 mm')."""
    return float(text_of(d, f"num-{num}").split()[0])


def _ramp_length(r: float, h: float, theta_deg: float) -> float:
    """Tangent-arc ramp length L = R sin θ + (H − R(1 − cos θ))/tan θ (tangent-arc
    geometry [derived])."""
    t = math.radians(theta_deg)
    return r * math.sin(t) + (h - r * (1.0 - math.cos(t))) / math.tan(t)


def _post(url: str, path: str, body: dict[str, Any], host: str | None = None) -> tuple[int, dict]:
    u = http.client.urlsplit(url)
    conn = http.client.HTTPConnection(u.hostname, u.port, timeout=60)
    headers = {"Content-Type": "application/json", **auth_header(url)}
    if host is not None:
        headers["Host"] = host
    conn.request("POST", path, json.dumps(body), headers)
    r = conn.getresponse()
    return r.status, json.loads(r.read() or b"{}")


# --- the tests -----------------------------------------------------------------------------


def test_page_shows_sample_and_ramp_length_follows_the_angle(server, browser) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    raw = tomllib.loads(SAMPLE.read_text())
    # the sample's values, as written in the file (units as text)
    assert field_of(d, "name").get_attribute("value") == raw["name"]
    assert float(field_of(d, "throat.width").get_attribute("value")) == raw["throat"]["width"]
    assert float(field_of(d, "throat.depth").get_attribute("value")) == raw["throat"]["depth"]
    assert float(field_of(d, "ramp.angle_deg").get_attribute("value")) == 7.0
    assert field_of(d, "outlet.diameter").get_attribute("value") == raw["outlet"]["diameter"]
    assert field_of(d, "flow.speed").get_attribute("value") == raw["flow"]["speed"]
    # H = D + lip thickness for a flush lip (README conventions); R = entry radius
    r, h = raw["ramp"]["entry_radius"], raw["throat"]["depth"] + raw["lip"]["thickness"]
    assert _shown_mm(d, "ramp_length_mm") == pytest.approx(_ramp_length(r, h, 7.0), abs=0.1)
    assert _shown_mm(d, "floor_drop_mm") == pytest.approx(h, abs=0.01)
    # the live answer carries the transition's steepest wall and the airflow's terms
    assert "transition steepest wall" in d.find_element("id", "numbers").text
    assert "impact pressure (isentropic)" in d.find_element("id", "flow").text
    type_key(d, "ramp.angle_deg", "6")
    want = _ramp_length(r, h, 6.0)  # 405.89 mm by the formula
    # the page's promise: the shown value follows within one second
    wait_until(d, 1.0, lambda: abs(_shown_mm(d, "ramp_length_mm") - want) <= 0.1)
    assert f">L {want:.1f}<" in d.find_element("id", "plan").get_attribute("innerHTML")
    type_key(d, "ramp.angle_deg", "7")
    wait_until(d, 5, lambda: abs(_shown_mm(d, "ramp_length_mm") - _ramp_length(r, h, 7.0)) <= 0.1)


def test_bad_value_shows_the_cli_sentence_and_builds_nothing(server, browser, tmp_path) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    type_key(d, "throat.width", "12 kg")
    # the message for the whole value (one for a part typed, "12 k", may come first)
    wait_until(d, 5, lambda: "'12 kg'" in text_of(d, "err-f-throat-width"))
    shown = text_of(d, "err-f-throat-width")
    # the CLI's own message for the same value in a spec file
    bad = tmp_path / "bad.toml"
    bad.write_text(SAMPLE.read_text().replace("width = 110", 'width = "12 kg"'))
    cli = subprocess.run(
        [sys.executable, "-m", "ductgen", "build", str(bad), "-o", str(tmp_path / "cli")],
        capture_output=True,
        text=True,
        env=checkout_env(),
        timeout=120,
    )
    assert cli.returncode == 2
    lines = [ln.strip() for ln in cli.stderr.splitlines() if ln.strip().startswith("throat.width")]
    assert lines and shown == lines[0]
    assert field_of(d, "throat.width").get_attribute("aria-invalid") == "true"
    assert not d.find_element("id", "build-btn").is_enabled()
    # the server refuses too: nothing is started or written
    out = tmp_path / "page-bad"
    data = d.execute_script("return window.ductgenPage.specData()")
    status, res = _post(server, "/api/build", {"data": data, "out": "page-bad"})
    assert status == 400 and res["problems"][0]["key"] == "throat.width"
    assert not out.exists() and not (tmp_path / "cli").exists()
    assert get_json(server, "/api/job")[1]["status"] == "idle"
    type_key(d, "throat.width", "110")
    wait_until(d, 5, lambda: text_of(d, "err-f-throat-width") == "")


def _same(a: Any, b: Any, where: str = "") -> None:
    """Reports equal: same keys, same strings, numbers to 1e-9 relative."""
    assert type(a) is type(b) or {type(a), type(b)} <= {int, float}, where
    if isinstance(a, dict):
        assert sorted(a) == sorted(b), where
        for k in a:
            _same(a[k], b[k], f"{where}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), where
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            _same(x, y, f"{where}[{i}]")
    elif isinstance(a, float):
        assert a == pytest.approx(b, rel=1e-9, abs=1e-12), where
    else:
        assert a == b, where


@pytest.mark.slow
def test_build_from_page_writes_what_ductgen_build_writes(  # type: ignore[no-untyped-def]
    server, browser, page_out, tmp_path
) -> None:
    from ductgen.cli import main

    d = browser
    open_page(d, server)
    d.find_element("id", "build-btn").click()
    wait_until(d, 10, lambda: "running" in text_of(d, "job") or "done" in text_of(d, "job"))
    # a second build while one runs is refused with a message
    data = d.execute_script("return window.ductgenPage.specData()")
    status, res = _post(server, "/api/build", {"data": data, "out": "second"})
    assert status == 409 and res["message"].startswith("busy:")
    assert not (page_out / "second").exists()
    wait_until(d, 600, lambda: "done" in text_of(d, "job") or "failed" in text_of(d, "job"))
    assert "done" in text_of(d, "job"), text_of(d, "job")
    # the same build through the CLI
    cli_out = tmp_path / "cli"
    assert main(["build", str(SAMPLE), "-o", str(cli_out), "--quiet"]) == 0
    page_report = json.loads((page_out / "report.json").read_text())
    cli_report = json.loads((cli_out / "report.json").read_text())
    _same(page_report, cli_report)
    assert sorted(p.name for p in page_out.iterdir()) == sorted(p.name for p in cli_out.iterdir())
    # every file is offered for download, and a download gives the file's bytes
    links = d.find_elements("css selector", "#files a")
    assert {a.text for a in links} == {p.name for p in page_out.iterdir()}
    got = d.execute_async_script(
        "const done = arguments[0]; "
        "fetch(document.querySelector('#files a').href.replace(/[^/]*$/, 'report.json'))"
        ".then(r => r.text()).then(done);"
    )
    assert json.loads(got) == page_report
    # the 3D view shows the built cutter: triangles drawn, not a blank canvas
    wait_until(
        d, 30, lambda: int(d.find_element("id", "viewer").get_attribute("data-drawn") or 0) > 0
    )
    png = d.find_element("id", "viewer").screenshot_as_png
    save_shot(png, "page-viewer.png")
    img = _png(png)
    background = np.array([0xEE, 0xF2, 0xF4]) / 255.0
    assert np.any(np.abs(img - background) > 0.1, axis=2).mean() > 0.05


def test_save_and_reload_round_trip(server, browser, page_out) -> None:  # type: ignore[no-untyped-def]
    from ductgen.spec import parse_spec

    d = browser
    open_page(d, server)
    saved = page_out / "saved.toml"  # the page's work folder
    type_id(d, "save-path", saved.name)
    d.find_element("id", "save-btn").click()
    wait_until(d, 10, lambda: text_of(d, "save-msg").startswith(("saved", "not saved")))
    assert text_of(d, "save-msg").startswith("saved"), text_of(d, "save-msg")
    assert load_spec(saved) == load_spec(SAMPLE)
    # reload the saved file into the page: the form gives the same spec again
    type_key(d, "ramp.angle_deg", "6.5")
    d.find_element("id", "open-btn").click()
    wait_until(d, 10, lambda: text_of(d, "save-msg").startswith("opened"))
    wait_until(d, 10, lambda: field_of(d, "ramp.angle_deg").get_attribute("value") in ("7", "7.0"))
    assert parse_spec(d.execute_script("return window.ductgenPage.specData()")) == load_spec(SAMPLE)
    # a changed value survives a save and a reload, and nothing else changes
    type_key(d, "ramp.angle_deg", "6.5")
    type_id(d, "save-path", "changed.toml")
    d.find_element("id", "save-btn").click()
    wait_until(d, 10, lambda: "changed.toml" in text_of(d, "save-msg"))
    base = load_spec(SAMPLE)
    want = base.model_copy(update={"ramp": base.ramp.model_copy(update={"angle_deg": 6.5})})
    assert load_spec(page_out / "changed.toml") == want
    # saving over an existing file needs the replace box
    d.find_element("id", "save-btn").click()
    wait_until(d, 10, lambda: text_of(d, "save-msg").startswith("not saved"))
    assert "refusing to overwrite" in text_of(d, "save-msg")


def _png(data: bytes) -> np.ndarray:
    import io

    import matplotlib.image as mpimg

    return mpimg.imread(io.BytesIO(data), format="png")[..., :3]


def test_screenshot_is_not_blank_and_shows_the_plan_view(server, browser) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    png = d.get_screenshot_as_png()
    save_shot(png, "page.png")
    img = _png(png)
    assert np.abs(img - img.mean(axis=(0, 1))).max() > 0.3  # not one flat colour
    plan = d.find_element("id", "plan-svg")
    r = plan.rect
    crop = img[int(r["y"]) : int(r["y"] + r["height"]), int(r["x"]) : int(r["x"] + r["width"])]
    # the opening (teal #2f6f73) and the flange (sand #efe2c6) are drawn in the plan view
    # (1000 px each: the club sample's 620 mm insert is drawn at a smaller scale since its
    # throat was deepened and its transition lengthened; 1506 px of flange measured then)
    for rgb, least in (((0x2F, 0x6F, 0x73), 1000), ((0xEF, 0xE2, 0xC6), 1000)):
        hit = np.all(np.abs(crop - np.array(rgb) / 255.0) < 0.03, axis=2)
        assert hit.sum() > least, rgb


def test_server_refuses_non_loopback_without_host(tmp_path) -> None:
    from ductgen.errors import SpecError
    from ductgen.page.guard import WorkFolder
    from ductgen.page.server import DesignApp, is_loopback, make_server

    for host in ("0.0.0.0", "192.168.1.10", "example.org"):
        with pytest.raises(SpecError) as err:
            make_server(DesignApp(data={}, work=WorkFolder(tmp_path)), host, 0)
        assert err.value.key == "--host" and "unless --host is given" in str(err.value)
    assert all(is_loopback(h) for h in ("127.0.0.1", "127.0.0.2", "::1", "localhost"))
    # given --host, the CLI binds and says plainly that the page is open to the network
    proc = subprocess.Popen(
        [*_DESIGN, "--host", "0.0.0.0", "--port", "0", "--no-browser"],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=checkout_env(),
        cwd=tmp_path,
    )
    try:
        lines = [proc.stdout.readline(), proc.stdout.readline()] if proc.stdout else []
        assert lines[-1].startswith("http://127.0.0.1:") and "?token=" in lines[-1]
    finally:
        proc.terminate()
        _, err_text = proc.communicate(timeout=30)
    assert "warning: listening on 0.0.0.0, not only this computer" in err_text


def test_sweep_from_the_page_is_small_and_checked_before_it_starts(server, page_out) -> None:  # type: ignore[no-untyped-def]
    data = tomllib.loads(SAMPLE.read_text())
    out = page_out / "sweep"
    body = {"data": data, "key": "ramp.angle_deg", "values": "4:20:1", "sweep_out": "sweep"}
    status, res = _post(server, "/api/sweep", body)
    assert status == 400 and res["problems"][0]["key"] == "sweep values"
    assert "at most 12 variants" in res["problems"][0]["sentence"]
    status, res = _post(server, "/api/sweep", {**body, "key": "ramp.nonsense", "values": "6,7"})
    assert status == 400 and not out.exists()


def test_foreign_host_header_and_non_json_posts_are_refused(server) -> None:  # type: ignore[no-untyped-def]
    # a page elsewhere reaching the server through DNS rebinding names another host
    assert get_json(server, "/api/job", host="attacker.example:80")[0] == 403
    assert _post(server, "/api/preview", {"data": {}}, host="attacker.example")[0] == 403
    u = http.client.urlsplit(server)
    conn = http.client.HTTPConnection(u.hostname, u.port, timeout=30)
    conn.request(
        "POST", "/api/build", "data=1", {"Content-Type": "text/plain", **auth_header(server)}
    )
    assert conn.getresponse().status == 415
