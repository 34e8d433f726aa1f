"""The design page for every spec, on a laptop and a phone, in headless Chromium (selenium,
Debian's chromium and chromedriver; skipped without them locally, a failure under CI=true):
points and directions as number boxes that round-trip through save and open, a panel spec
(a panel file made here, inside the work folder), the phone layout, a reload that restores
the edits, and a cancelled build that publishes nothing.

``DUCTGEN_SHOTS=DIR`` keeps the screenshots (1440×900 and 390×844) for people to look at.
"""

from __future__ import annotations

import json
import re
import shutil
from collections.abc import Iterator
from pathlib import Path

import pytest
import tomli_w

from ductgen.spec import load_spec
from tests.test_page import (
    SAMPLE,
    chromium,
    field_of,
    get_json,
    open_page,
    save_shot,
    serve_design,
    text_of,
    type_id,
    type_key,
    wait_until,
)


@pytest.fixture(scope="module")
def browser():  # type: ignore[no-untyped-def]
    yield from chromium()


@pytest.fixture(scope="module")
def work(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("page-work")
    shutil.copy(SAMPLE, folder / SAMPLE.name)
    return folder


@pytest.fixture(scope="module")
def server(work: Path) -> Iterator[str]:
    yield from serve_design(work / SAMPLE.name, work)


def _problems(d) -> list[str]:  # type: ignore[no-untyped-def]
    errs = d.find_elements("css selector", ".err[id^=err-]")
    texts = [e.get_attribute("textContent") for e in errs]
    return [t for t in texts if t] + [text_of(d, "global-errors")] * bool(
        text_of(d, "global-errors")
    )


def _outer(d, elem_id: str) -> str:  # type: ignore[no-untyped-def]
    return str(d.find_element("id", elem_id).get_attribute("outerHTML"))


def _set(d, key: str, values: list[str]) -> None:  # type: ignore[no-untyped-def]
    for i, v in enumerate(values):
        type_key(d, f"{key}[{i}]", v)


def test_the_bed_takes_three_values_that_survive_save_and_open(server, browser, work) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    assert field_of(d, "print.bed[0]").get_attribute("placeholder") == "220"
    _set(d, "print.bed", ["300", "250", "10 in"])
    wait_until(d, 10, lambda: "up to date" in text_of(d, "status") and not _problems(d))
    assert d.execute_script("return window.ductgenPage.specData()")["print"] == {
        "bed": [300, 250, "10 in"]
    }
    type_id(d, "save-path", "bed.toml")
    d.find_element("id", "save-btn").click()
    wait_until(d, 10, lambda: text_of(d, "save-msg").startswith(("saved", "not saved")))
    assert text_of(d, "save-msg") == "saved bed.toml"
    assert load_spec(work / "bed.toml").print.bed == (300.0, 250.0, 254.0)
    # a bad component is named at its box; opening the file puts the three values back
    type_key(d, "print.bed[1]", "wide")
    wait_until(d, 10, lambda: "print.bed" in text_of(d, "err-f-print-bed"))
    d.find_element("id", "open-btn").click()
    wait_until(d, 10, lambda: text_of(d, "save-msg") == "opened bed.toml")
    got = [field_of(d, f"print.bed[{i}]").get_attribute("value") for i in range(3)]
    assert got == ["300", "250", "10 in"]
    wait_until(d, 10, lambda: "up to date" in text_of(d, "status") and not _problems(d))


def test_a_reload_restores_the_edits_and_says_so(server, browser) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    assert d.find_element("id", "restored").get_attribute("hidden") is not None
    type_key(d, "ramp.angle_deg", "6.3")
    type_key(d, "outlet.diameter", "3 in")
    wait_until(d, 10, lambda: "up to date" in text_of(d, "status"))
    # the unit beside the box follows the written unit
    unit = d.find_element("css selector", '[data-field="outlet.diameter"] .unit').text
    assert unit == "in"
    d.refresh()
    wait_until(d, 30, lambda: "up to date" in text_of(d, "status"))
    assert field_of(d, "ramp.angle_deg").get_attribute("value") == "6.3"
    assert field_of(d, "outlet.diameter").get_attribute("value") == "3 in"
    note = text_of(d, "restored")
    assert note.startswith("Restored") and "kept in this browser" in note
    # the browser keeps the spec, never the page's key (an HttpOnly cookie)
    kept = d.execute_script("return JSON.stringify(localStorage)")
    assert "6.3" in kept and server.split("token=", 1)[1] not in kept
    d.find_element("id", "discard-btn").click()
    wait_until(d, 10, lambda: field_of(d, "ramp.angle_deg").get_attribute("value") in ("7", "7.0"))


def test_layout_on_a_laptop_and_a_phone(server, browser) -> None:  # type: ignore[no-untyped-def]
    d = browser
    try:
        for w, h in ((1440, 900), (390, 844)):
            d.set_window_size(w, h)
            open_page(d, server)
            assert d.execute_script("return window.innerWidth") == w
            widths = [e.rect["width"] for e in d.find_elements("css selector", ".svg-holder svg")]
            assert len(widths) == 2 and min(widths) >= 300, (w, widths)
            # nothing wider than the window: no sideways scrolling on a phone
            assert d.execute_script("return document.documentElement.scrollWidth") <= w
            save_shot(d.get_screenshot_as_png(), f"page-{w}x{h}.png")
            d.execute_script("document.getElementById('plan').scrollIntoView()")
            save_shot(d.get_screenshot_as_png(), f"page-{w}x{h}-drawings.png")
        # stacked: on the phone the drawings come below the form, not beside it
        form = d.find_element("css selector", ".form-pane").rect
        plan = d.find_element("id", "plan").rect
        assert plan["y"] >= form["y"] + form["height"] - 1
    finally:
        d.set_window_size(1280, 800)


def test_cancel_stops_the_build_and_publishes_nothing(server, browser, work) -> None:  # type: ignore[no-untyped-def]
    d = browser
    open_page(d, server)
    type_id(d, "out-dir", "cancelled")
    d.find_element("id", "build-btn").click()
    wait_until(d, 30, lambda: "stage" in text_of(d, "job"))
    assert re.search(r"stage \d of \d+: \w+", text_of(d, "job")), text_of(d, "job")
    d.find_element("id", "cancel-btn").click()
    wait_until(
        d, 60, lambda: "cancelled" in text_of(d, "job") and "running" not in text_of(d, "job")
    )
    assert "nothing was published" in text_of(d, "job")
    job = get_json(server, "/api/job")[1]
    assert job["status"] == "cancelled" and "written" not in job
    out = work / "cancelled"
    assert not out.exists() or not any(out.iterdir())
    assert get_json(server, f"/out/{job['id']}/report.json")[0] == 404
    assert not d.find_element("id", "cancel-btn").is_displayed()


@pytest.fixture(scope="module")
def panel_work(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A work folder with a panel made here (a cylinder patch, R 900 mm along the flow) and
    a spec that uses it by a relative name."""
    cq = pytest.importorskip("cadquery")
    from tests.helpers import CURVED_BASE as BASE
    from tests.panels import cylinder_panel

    folder = tmp_path_factory.mktemp("page-panel")
    (folder / "panels").mkdir()
    cq.exporters.export(cylinder_panel(900.0, "spanwise", 2.0), str(folder / "panels/hood.step"))
    skin = {
        "shape": "panel",
        "file": "panels/hood.step",
        "at": [0.0, 0.0, 0.0],
        "flow_direction": [1.0, 0.0, 0.0],
    }
    (folder / "hood.toml").write_text(tomli_w.dumps({**BASE, "name": "hood", "skin": skin}))
    return folder


def test_a_panel_spec_opens_without_errors(panel_work, browser) -> None:  # type: ignore[no-untyped-def]
    d = browser
    for url in serve_design(panel_work / "hood.toml", panel_work):
        open_page(d, url)
        assert not _problems(d), _problems(d)
        assert field_of(d, "skin.shape").get_attribute("value") == "panel"
        # only the panel's keys: no radius box, the point and direction as three boxes
        assert not d.find_elements("css selector", '[data-key="skin.radius"]')
        assert [field_of(d, f"skin.at[{i}]").get_attribute("value") for i in range(3)] == [
            "0",
            "0",
            "0",
        ]
        assert "your panel hood.step" in text_of(d, "skin-caption")
        # the panel round the datum, with the datum, the flow arrow and the normal
        view = d.find_element("id", "panel-svg")
        assert view.is_displayed() and view.rect["width"] >= 300
        for part in ("panel-datum", "panel-flow", "panel-normal", "panel-opening"):
            assert d.find_element("id", part)
        assert "flow (1.00, 0.00, 0.00)" in view.get_attribute("innerHTML")
        # the file picker lists the work folder's panels
        options = d.execute_async_script(
            "const done = arguments[0]; fetch('/api/panel-files').then(r => r.json())"
            ".then(j => done(JSON.stringify(j.files)));"
        )
        assert json.loads(options) == ["panels/hood.step"]
        # moving the datum along the flow moves it on the panel view, still without errors
        # (the section stays: a cylinder curving along the flow is the same at every datum)
        view_before = _outer(d, "panel-svg")
        type_key(d, "skin.at[0]", "40")
        wait_until(d, 60, lambda: _outer(d, "panel-svg") != view_before)  # noqa: B023
        assert not _problems(d)
        d.execute_script("document.getElementById('plan').scrollIntoView()")
        save_shot(d.get_screenshot_as_png(), "page-panel.png")
        # the point and the direction go through save and open as three numbers each
        type_key(d, "skin.flow_direction[2]", "0.02")
        wait_until(d, 60, lambda: "up to date" in text_of(d, "status"))
        type_id(d, "save-path", "hood-moved.toml")
        d.find_element("id", "save-btn").click()
        wait_until(d, 60, lambda: text_of(d, "save-msg").startswith(("saved", "not saved")))
        assert text_of(d, "save-msg") == "saved hood-moved.toml"
        saved = load_spec(panel_work / "hood-moved.toml").skin
        assert saved.at == (40.0, 0.0, 0.0) and saved.flow_direction == (1.0, 0.0, 0.02)
        type_key(d, "skin.at[0]", "0")
        d.find_element("id", "open-btn").click()
        wait_until(d, 60, lambda: text_of(d, "save-msg") == "opened hood-moved.toml")
        wait_until(d, 10, lambda: field_of(d, "skin.at[0]").get_attribute("value") == "40")
        assert field_of(d, "skin.flow_direction[2]").get_attribute("value") == "0.02"
        # switching the shape drops the panel's keys and asks for the cylinder's
        from selenium.webdriver.support.ui import Select

        Select(field_of(d, "skin.shape")).select_by_value("cylinder")
        wait_until(d, 10, lambda: "a cylinder skin needs it" in text_of(d, "err-f-skin-radius"))
        data = d.execute_script("return window.ductgenPage.specData()")
        assert data["skin"] == {"shape": "cylinder"}


def test_the_sweep_writes_into_the_folder_shown(server, browser, work) -> None:  # type: ignore[no-untyped-def]
    from selenium.webdriver.support.ui import Select

    d = browser
    open_page(d, server)
    for box in d.find_elements("css selector", "#kinds input"):  # the cutter only: quick
        if box.get_attribute("value") != "cutter" and box.is_selected():
            box.click()
    Select(d.find_element("id", "sweep-key")).select_by_value("ramp.angle_deg")
    type_id(d, "sweep-values", "6.5,7")
    assert d.find_element("id", "sweep-out").get_attribute("value") == "club-racer-brake-sweep"
    type_id(d, "sweep-out", "angles")
    d.find_element("id", "sweep-btn").click()
    wait_until(d, 600, lambda: re.search("written in|: failed", text_of(d, "sweep-msg")))
    assert text_of(d, "sweep-msg").startswith("2 variants written in angles"), text_of(
        d, "sweep-msg"
    )
    job = get_json(server, "/api/job")[1]
    assert job["kind"] == "sweep" and job["stage_k"] == job["stage_n"] == 2
    assert (work / "angles" / job["page"]).is_file()
    assert not (work / "club-racer-brake-sweep").exists()
    # the sweep's progress is in its own card, the build card is left alone
    assert "sweep" not in text_of(d, "job")
    href = d.find_element("id", "sweep-page").get_attribute("href")
    status = d.execute_async_script(
        "const done = arguments[1]; fetch(arguments[0]).then(r => done(r.status));", href
    )
    assert status == 200
