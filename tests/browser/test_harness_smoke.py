"""Smoke test of the browser harness on a tiny ipywidgets + ipympl app.

Proves that Voila serves the notebook, the widgets render in Chromium, a
keyboard step on the slider reaches the kernel, the observer updates the label,
and ipympl repaints the figure.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from .conftest import wait_canvas_change, wait_canvas_ink

NOTEBOOK = Path(__file__).resolve().parents[1] / "data" / "browser_smoke.ipynb"


def expected_label(a: float) -> str:
    """The label text the notebook computes for slider value ``a`` (same formula)."""
    return f"a={a:.2f} sin(a)={math.sin(a):.4f}"


@pytest.mark.browser
def test_arrow_key_updates_label_and_figure(page, voila_app, artifacts_dir):
    from playwright.sync_api import expect

    base_url = voila_app(NOTEBOOK)
    page.goto(base_url, wait_until="domcontentloaded")

    handle = page.locator(".kit-slider .noUi-handle")
    readout = page.locator(".kit-slider .widget-readout")
    label = page.locator(".kit-label")
    expect(handle).to_be_visible(timeout=30000)

    start = float(readout.inner_text())
    assert start == pytest.approx(1.0)
    expect(label).to_have_text(expected_label(start))
    before = wait_canvas_ink(page)

    handle.focus()
    handle.press("ArrowRight")

    # One step of 0.1; the readout shows the kernel-side value with 2 decimals.
    expect(readout).not_to_have_text(f"{start:.2f}")
    moved = float(readout.inner_text())
    assert moved == pytest.approx(start + 0.1)
    expect(label).to_have_text(expected_label(moved))
    # Fails with a timeout unless ipympl repaints the figure with new pixels.
    wait_canvas_change(page, before)

    page.mouse.move(0, 0)  # keep the ipympl toolbar and footer out of the picture
    page.screenshot(path=str(artifacts_dir / "browser-smoke.png"), full_page=True)
    page.locator(".kit-figure").screenshot(path=str(artifacts_dir / "browser-smoke-figure.png"))
