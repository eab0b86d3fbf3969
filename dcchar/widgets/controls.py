"""Small building blocks of the widget kit: labelled sliders, slider ranges, and the update coalescer.

Nothing here computes anything about motors: the ranges are read off the machines' own parameters
(their rated voltage, field and armature resistances) so that a slider spans a useful interval.
"""

from __future__ import annotations

import asyncio
import math
import time

import ipywidgets as w

__all__ = ["Coalescer", "labelled_slider", "nice_step", "from_front_end", "DESCRIPTION_WIDTH"]

#: Width of the description column of the controls, so that the sliders line up.
DESCRIPTION_WIDTH = "190px"


def nice_step(span: float, divisions: int = 400) -> float:
    """A round step (1, 2 or 5 times a power of ten) that cuts ``span`` into about ``divisions`` parts."""
    if not span > 0 or not math.isfinite(span):
        return 1.0
    raw = span / divisions
    exp = math.floor(math.log10(raw))
    base = raw / 10**exp
    mult = 1.0 if base <= 1.0 else 2.0 if base <= 2.0 else 5.0 if base <= 5.0 else 10.0
    return mult * 10**exp


def _decimals(step: float) -> int:
    return max(0, -math.floor(math.log10(step) + 1e-9)) if step < 1 else 0


def labelled_slider(key: str, description: str, value: float, low: float, high: float, step: float | None = None,
                    tooltip: str = "") -> w.FloatSlider:
    """A FloatSlider with the unit in its description and an editable readout for typed entry.

    The range is widened to hold ``value``. The slider carries the CSS classes ``kit-slider`` and
    ``kit-<key>`` (``_`` in ``key`` become ``-``).
    """
    low, high = min(low, value), max(high, value)
    if not high > low:
        high = low + 1.0
    step = nice_step(high - low) if step is None else step
    digits = _decimals(step)
    s = w.FloatSlider(value=value, min=low, max=high, step=step, description=description,
                      readout=True, readout_format=f".{digits}f", continuous_update=True,
                      style={"description_width": DESCRIPTION_WIDTH}, layout=w.Layout(width="100%"),
                      tooltip=tooltip or description)
    s.add_class("kit-slider")
    s.add_class("kit-" + key.replace("_", "-"))
    return s


def from_front_end(change) -> bool:
    """True when a trait change came from the browser (ipywidgets holds a property lock then).

    Programmatic changes (a notebook cell or a test setting ``slider.value``) return False.
    """
    owner = change.get("owner") if isinstance(change, dict) else getattr(change, "owner", None)
    name = change.get("name") if isinstance(change, dict) else getattr(change, "name", None)
    lock = getattr(owner, "_property_lock", None) or {}
    return name in lock


def _running_loop():
    try:
        return asyncio.get_running_loop()
    except RuntimeError:
        return None


class Coalescer:
    """Run ``work`` for the newest state, dropping the states a burst of events leaves behind.

    A request from the browser while the kit is idle runs at once (leading edge), so a single key
    press is answered without delay. Requests that arrive during the work, or within ``delay``
    seconds after it, only mark the state dirty; one run at the end of that quiet time (trailing
    edge, scheduled on the kernel's event loop) then processes the newest values. Dragging a
    slider therefore redraws as fast as the work allows and never works through a queue of stale
    values. Programmatic requests (``defer=False``) and requests made where no event loop runs
    are processed at once, so a cell or a test that sets a value sees the result right away.

    Exceptions raised by ``work`` go to ``report(exc)`` and never escape the callback.
    """

    def __init__(self, work, *, delay: float = 0.012, report=None):
        self._work = work
        self.delay = float(delay)
        self._report = report
        self._dirty = False
        self._handle = None
        self._quiet_until = 0.0
        self._running = False
        self.stats = {"requests": 0, "runs": 0, "deferred": 0}

    @property
    def pending(self) -> bool:
        """True when a run is scheduled or the state changed since the last run."""
        return self._dirty

    def request(self, *, defer: bool = False):
        """Ask for a run with the newest state (see the class notes)."""
        self.stats["requests"] += 1
        self._dirty = True
        if self._running:
            return  # the run in progress re-checks the flag when it ends
        if not defer:
            self._cancel()
            self._run()
            return
        if self._handle is not None:
            return
        loop = _running_loop()
        now = time.monotonic()
        if loop is None or now >= self._quiet_until:
            self._run()
            return
        self.stats["deferred"] += 1
        self._handle = loop.call_later(self._quiet_until - now, self._trailing)

    def flush(self):
        """Run now if anything is pending (cancels a scheduled run)."""
        self._cancel()
        if self._dirty:
            self._run()

    def _cancel(self):
        if self._handle is not None:
            self._handle.cancel()
            self._handle = None

    def _trailing(self):
        self._handle = None
        if self._dirty:
            self._run()

    def _run(self):
        self._running = True
        try:
            while self._dirty:
                self._dirty = False
                self.stats["runs"] += 1
                try:
                    self._work()
                except Exception as exc:  # shown by the owner, never lost
                    if self._report is None:
                        raise
                    self._report(exc)
                # a programmatic change made by the work itself sets the flag again; do it once more
        finally:
            self._running = False
            self._quiet_until = time.monotonic() + self.delay
