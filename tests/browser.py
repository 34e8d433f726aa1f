"""Helpers the browser tests share: driving the design page through selenium, its JSON
API with the page's key, and headless Chromium for the sweep's comparison page."""

from __future__ import annotations

import http.client
import json
import os
import shutil
import subprocess
from pathlib import Path

import pytest

from tests.conftest import CHROMIUM_FLAGS


def wait_until(d, seconds: float, cond):  # type: ignore[no-untyped-def]
    from selenium.common.exceptions import NoSuchElementException, StaleElementReferenceException
    from selenium.webdriver.support.ui import WebDriverWait

    ignored = (StaleElementReferenceException, NoSuchElementException, ValueError)
    wait = WebDriverWait(d, seconds, poll_frequency=0.05, ignored_exceptions=ignored)
    return wait.until(lambda _d: cond())


def field_of(d, key: str):  # type: ignore[no-untyped-def]
    from selenium.webdriver.common.by import By

    return d.find_element(By.CSS_SELECTOR, f'[data-key="{key}"]')


def text_of(d, elem_id: str) -> str:  # type: ignore[no-untyped-def]
    from selenium.webdriver.common.by import By

    return d.find_element(By.ID, elem_id).text


def type_key(d, key: str, text: str) -> None:  # type: ignore[no-untyped-def]
    from selenium.webdriver.common.keys import Keys

    f = field_of(d, key)
    f.send_keys(Keys.CONTROL, "a")
    f.send_keys(Keys.DELETE)
    f.send_keys(text)


def open_page(d, url: str, keep: bool = False) -> None:  # type: ignore[no-untyped-def]
    """Load the page; without ``keep``, from the spec file (edits an earlier test left in
    the browser's storage are forgotten first)."""
    d.get(url)
    if not keep:
        d.execute_script("localStorage.clear()")
        d.refresh()
    wait_until(d, 30, lambda: "up to date" in text_of(d, "status"))


def auth_header(url: str) -> dict[str, str]:
    """The page's key (printed in its address) as a script sends it."""
    return {"Authorization": "Bearer " + url.split("token=", 1)[1]}


def get_json(url: str, path: str, host: str | None = None) -> tuple[int, dict]:
    u = http.client.urlsplit(url)
    conn = http.client.HTTPConnection(u.hostname, u.port, timeout=60)
    conn.request("GET", path, headers={**auth_header(url), **({"Host": host} if host else {})})
    r = conn.getresponse()
    return r.status, json.loads(r.read() or b"{}")


def type_id(d, elem_id: str, text: str) -> None:  # type: ignore[no-untyped-def]
    from selenium.webdriver.common.keys import Keys

    f = d.find_element("id", elem_id)
    f.send_keys(Keys.CONTROL, "a")
    f.send_keys(Keys.DELETE)
    f.send_keys(text)


def save_shot(data: bytes, name: str) -> None:
    """Keep a screenshot for people to look at (DUCTGEN_SHOTS=folder)."""
    folder = os.environ.get("DUCTGEN_SHOTS")
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        (Path(folder) / name).write_bytes(data)


def chromium_path() -> str | None:
    path = shutil.which("chromium") or (
        "/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None
    )
    if path is None:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail(
                "chromium is missing under CI: .ci/run must install chromium chromium-driver"
            )
        pytest.skip("chromium not installed (apt-get install chromium chromium-driver)")
    return path


def run_chromium(exe: str, tmp: Path, *args: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [
            exe,
            *CHROMIUM_FLAGS,
            f"--user-data-dir={tmp / 'profile'}",
            *args,
        ],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
