"""The hoist walkthrough served by Voila, driven in Chromium: the comparer answers like the library.

The expected cell texts are computed here with :func:`dcchar.studies.comparison.compare`,
:func:`dcchar.files.tables.display_table` and :func:`dcchar.files.tables.format_value`, the
functions the kit itself uses, for the same invented demo frame and hoist as the notebook.
"""

from __future__ import annotations

import re
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from .conftest import wait_canvas_change, wait_canvas_ink

NOTEBOOK = Path(__file__).resolve().parents[2] / "notebooks" / "hoist_walkthrough.ipynb"


def expected_cells(voltage: float) -> dict:
    """key -> (speed text, armature current text) of the results table at ``voltage``."""
    from dcchar.files.tables import display_table, format_value
    from dcchar.models.loads import Gearing, Hoist
    from dcchar.studies.comparison import TABLE_COLUMNS, ControlSettings, compare
    from dcchar.studies.demo import demo_family

    # the notebook's hoist (invented demo data)
    hoist = Hoist(load_mass=1500.0, hook_mass=80.0, rope_mass=40.0, drum_diameter=0.40, reeving=2,
                  gearing=Gearing(ratio=20.0, efficiency=0.92))
    comp = compare(demo_family(), hoist, ControlSettings(voltage=voltage))
    _, rows = display_table(comp, "si")
    cols = list(TABLE_COLUMNS)
    return {k: (format_value(r[cols.index("speed")]), format_value(r[cols.index("armature_current")]))
            for k, r in zip(comp.candidates, rows)}


def _check_table(page, expect, cells):
    for key, (speed, current) in cells.items():
        expect(page.locator(f'.kit-results td[data-key="{key}"][data-col="speed"]')).to_have_text(speed)
        expect(page.locator(f'.kit-results td[data-key="{key}"][data-col="armature_current"]')).to_have_text(current)


@pytest.mark.browser
def test_voltage_slider_moves_the_operating_points(page, voila_app, artifacts_dir):
    from playwright.sync_api import expect

    t0 = time.monotonic()
    with ThreadPoolExecutor(1) as pool:  # the expected figures are computed while Voila starts
        expected = pool.submit(lambda: {v: expected_cells(v) for v in (230.0, 231.0, 205.0)})
        base_url = voila_app(NOTEBOOK)
        t1 = time.monotonic()
        page.goto(base_url, wait_until="domcontentloaded")
        handle = page.locator(".kit-voltage .noUi-handle")
        readout = page.locator(".kit-voltage .widget-readout")
        expect(handle).to_be_visible(timeout=60000)
        t2 = time.monotonic()
        cells = expected.result()
    print(f"server ready {t1 - t0:.1f} s, notebook run and widgets shown {t2 - t1:.1f} s")
    start = float(readout.inner_text())
    assert start == pytest.approx(230.0)
    _check_table(page, expect, cells[230.0])
    before = wait_canvas_ink(page)

    # one keyboard step (1 V)
    handle.focus()
    handle.press("ArrowRight")
    expect(readout).to_have_text(re.compile(r"^231(\.0*)?$"))
    _check_table(page, expect, cells[231.0])
    after_key = wait_canvas_change(page, before)

    # typed entry in the readout
    readout.click()
    page.keyboard.press("Control+A")
    page.keyboard.type("205")
    page.keyboard.press("Enter")
    expect(readout).to_have_text(re.compile(r"^205(\.0*)?$"))
    _check_table(page, expect, cells[205.0])
    wait_canvas_change(page, after_key)
    expect(page.locator(".kit-status")).to_contain_text("updated in")
    expect(page.locator(".kit-cautions .kit-defer")).to_be_visible()

    page.mouse.move(0, 0)
    # Voila scrolls inside its own container: make the viewport tall enough for the whole kit
    height = page.locator(".kit-comparer").bounding_box()["height"]
    page.set_viewport_size({"width": 1280, "height": int(min(4000, height + 1200))})
    page.locator(".kit-comparer").screenshot(path=str(artifacts_dir / "comparer-voila.png"))
    page.locator(".kit-figure").screenshot(path=str(artifacts_dir / "comparer-voila-figure.png"))
