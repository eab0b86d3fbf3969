"""Real-browser harness: Voila serving a notebook, driven by Playwright in Debian's Chromium.

Fixtures
--------
``browser`` (session)
    A Playwright ``Browser`` running ``/usr/bin/chromium`` headless (override
    the path with the environment variable ``DCCHAR_CHROMIUM``). Skips the
    test with a reason when Chromium or Playwright is missing; when the
    environment variable ``CI`` is set, fails instead, so that a CI run cannot
    pass by skipping every browser test.
``page`` (function)
    A fresh ``Page`` in its own context, viewport 1280x1000. Every request to
    a host other than 127.0.0.1 is aborted at once (no waiting on the
    network). Uncaught JavaScript errors (``pageerror`` events) are collected
    in ``page.kit_page_errors``; the test errors at teardown if there are any.
    When the test body fails, a full-page screenshot is written to
    ``test-artifacts/<test id>-failure.png``.
``voila_app`` (function)
    A factory: ``base_url = voila_app(notebook_path)`` starts Voila on
    127.0.0.1 with a free port, in its own process group, with the isolated
    environment of ``isolated_env`` (tests/conftest.py), and returns the URL
    (``http://127.0.0.1:PORT/``, ending in a slash) once
    ``/voila/static/favicon.ico`` answers 200. It never polls ``/``: every GET
    of the page starts a kernel and runs the notebook. Open the app with
    ``page.goto(base_url, wait_until="domcontentloaded")``, which returns once
    the notebook has run. The server log goes to
    ``test-artifacts/voila-<notebook>-<port>.log``. At teardown each server gets
    SIGTERM (it shuts its kernels down), ``wait(15)``, then SIGKILL of its
    process group and of any kernel it left behind. May be called several
    times in one test.
``artifacts_dir`` (session, from tests/conftest.py)
    The repository's ``test-artifacts/`` folder, created.

Helpers (import with ``from .conftest import canvas_hash, wait_canvas_ink``)
---------------------------------------------------------------------------
``canvas_hash(page, selector=".kit-figure") -> str``
    Hash of the pixels (``getImageData``) of the first ``<canvas>`` inside the
    first element matching ``selector``. With ipympl that is the canvas the
    figure is painted on (the second, stacked canvas only holds the zoom box).
``wait_canvas_ink(page, selector=".kit-figure", timeout=15000) -> str``
    Waits until that canvas shows ink (a visible pixel that is not white),
    that is, until ipympl has painted the figure; returns its hash.
``wait_canvas_change(page, old_hash, selector=".kit-figure", timeout=15000) -> str``
    Waits until the hash differs from ``old_hash`` (ipympl redraws after a
    browser-to-kernel round trip, so a figure update is asynchronous) and
    returns the new hash.

Notebook conventions the harness relies on: widgets carry CSS classes
(``kit-slider``, ``kit-label``, ``kit-figure`` on ``fig.canvas``), ipympl
figures are made inside ``with plt.ioff():`` and have
``fig.canvas.header_visible = False``.
"""

from __future__ import annotations

import os
import re
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest

CHROMIUM = Path(os.environ.get("DCCHAR_CHROMIUM", "/usr/bin/chromium"))
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]
VIEWPORT = {"width": 1280, "height": 1000}
# Any http(s) URL whose host is not 127.0.0.1.
NOT_LOOPBACK = re.compile(r"^https?://(?!127\.0\.0\.1[:/])")
SERVER_START_TIMEOUT = 60.0

# FNV-1a over the RGBA bytes of the first canvas in the element.
_CANVAS_JS = """
(selector) => {
  const host = document.querySelector(selector);
  const canvas = host && host.querySelector("canvas");
  if (!canvas || canvas.width === 0 || canvas.height === 0) return null;
  const data = canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height).data;
  let h = 0x811c9dc5;
  let ink = false;
  for (let i = 0; i < data.length; i++) {
    h ^= data[i];
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  for (let i = 0; i < data.length; i += 4) {
    if (data[i + 3] > 0 && (data[i] < 250 || data[i + 1] < 250 || data[i + 2] < 250)) {
      ink = true;
      break;
    }
  }
  return {hash: canvas.width + "x" + canvas.height + ":" + h.toString(16), ink: ink};
}
"""


def _canvas_state(page, selector: str) -> dict | None:
    return page.evaluate(_CANVAS_JS, selector)


def canvas_hash(page, selector: str = ".kit-figure") -> str:
    """Hash of the pixels of the first canvas inside ``selector``.

    Raises AssertionError when there is no such canvas (or it has no size).
    """
    state = _canvas_state(page, selector)
    assert state is not None, f"no sized <canvas> inside {selector!r}"
    return state["hash"]


def _poll(page, test: Callable[[], object], timeout: float, what: str):
    deadline = time.monotonic() + timeout / 1000.0
    while True:
        result = test()
        if result:
            return result
        if time.monotonic() > deadline:
            raise AssertionError(f"timed out after {timeout:.0f} ms waiting for {what}")
        page.wait_for_timeout(50)


def wait_canvas_ink(page, selector: str = ".kit-figure", timeout: float = 15000) -> str:
    """Wait until the first canvas inside ``selector`` has ink; return its hash."""

    def painted():
        state = _canvas_state(page, selector)
        return state["hash"] if state and state["ink"] else None

    return _poll(page, painted, timeout, f"ink on the canvas in {selector!r}")


def wait_canvas_change(
    page, old_hash: str, selector: str = ".kit-figure", timeout: float = 15000
) -> str:
    """Wait until the canvas hash inside ``selector`` differs from ``old_hash``; return it."""

    def changed():
        state = _canvas_state(page, selector)
        return state["hash"] if state and state["hash"] != old_hash else None

    return _poll(page, changed, timeout, f"the canvas in {selector!r} to change")


def _safe_name(nodeid: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", nodeid)[-150:]


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item, call):
    """Keep each phase's report on the item, so fixtures can see a failed test body."""
    outcome = yield
    report = outcome.get_result()
    setattr(item, f"rep_{report.when}", report)


@pytest.fixture(scope="session")
def browser():
    """Headless Debian Chromium under sync Playwright (see the module docstring)."""

    def unavailable(reason: str):
        if os.environ.get("CI"):
            pytest.fail(f"{reason} (CI is set, so browser tests must run)", pytrace=False)
        pytest.skip(reason)

    if not CHROMIUM.exists():
        unavailable(f"Chromium not found at {CHROMIUM}: run 'make browser'")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        unavailable("playwright is not installed: run 'make venv'")

    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        try:
            yield browser
        finally:
            browser.close()


@pytest.fixture
def page(browser, request, artifacts_dir: Path):
    """A new page on loopback only, with pageerror checking and a screenshot on failure."""
    context = browser.new_context(viewport=VIEWPORT)
    context.route(NOT_LOOPBACK, lambda route: route.abort())
    page = context.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.kit_page_errors = errors
    try:
        yield page
    finally:
        report = getattr(request.node, "rep_call", None)
        if report is not None and report.failed:
            shot = artifacts_dir / f"{_safe_name(request.node.nodeid)}-failure.png"
            try:
                page.screenshot(path=str(shot), full_page=True)
            except Exception as exc:  # the page may be gone; keep the real failure
                sys.stderr.write(f"could not save {shot}: {exc}\n")
        context.close()
    if errors:
        pytest.fail(f"uncaught JavaScript errors in the page: {errors}", pytrace=False)


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


# Ignore any proxy settings of the environment: the server is on loopback.
_DIRECT = urllib.request.build_opener(urllib.request.ProxyHandler({}))


def _answers_200(url: str) -> bool:
    try:
        with _DIRECT.open(url, timeout=2) as response:
            return response.status == 200
    except (urllib.error.URLError, ConnectionError, TimeoutError, OSError):
        return False


def _descendants(pid: int) -> list[int]:
    """PIDs of all live descendants of ``pid`` (Linux /proc), children first."""
    parents: dict[int, int] = {}
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            stat = (entry / "stat").read_text()
        except OSError:
            continue
        # The command name is in parentheses and may contain spaces.
        fields = stat.rsplit(")", 1)[1].split()
        parents[int(entry.name)] = int(fields[1])
    found: list[int] = []
    frontier = [pid]
    while frontier:
        current = frontier.pop()
        kids = [p for p, ppid in parents.items() if ppid == current]
        found.extend(kids)
        frontier.extend(kids)
    return found


def _tail(path: Path, lines: int = 40) -> str:
    try:
        return "\n".join(path.read_text(errors="replace").splitlines()[-lines:])
    except OSError:
        return "(no log)"


def _stop(proc: subprocess.Popen) -> None:
    kernels = _descendants(proc.pid) if proc.poll() is None else []
    if proc.poll() is None:
        proc.send_signal(signal.SIGTERM)
        try:
            proc.wait(15)
        except subprocess.TimeoutExpired:
            pass
    try:
        os.killpg(proc.pid, signal.SIGKILL)
    except (ProcessLookupError, PermissionError):
        pass
    # Kernels run in sessions of their own, outside the server's group.
    for pid in kernels:
        try:
            os.kill(pid, signal.SIGKILL)
        except (ProcessLookupError, PermissionError):
            pass
    proc.wait(15)


@pytest.fixture
def voila_app(isolated_env: dict[str, str], artifacts_dir: Path) -> Iterator[Callable[..., str]]:
    """Factory ``voila_app(notebook_path, *extra_args) -> base_url`` (see the module docstring)."""
    started: list[tuple[subprocess.Popen, object]] = []
    env = dict(isolated_env)
    # A kernel under Voila should pick its default backend as it would for a
    # user (inline); an MPLBACKEND inherited from the test run would replace it.
    env.pop("MPLBACKEND", None)

    def start(notebook_path: str | os.PathLike, *extra_args: str) -> str:
        notebook = Path(notebook_path).resolve()
        if not notebook.is_file():
            raise FileNotFoundError(notebook)
        port = _free_port()
        log_path = artifacts_dir / f"voila-{notebook.stem}-{port}.log"
        log = open(log_path, "wb")
        cmd = [
            sys.executable, "-m", "voila",
            "--no-browser",
            "--Voila.ip=127.0.0.1",
            f"--port={port}",
            "--Voila.port_retries=0",
            "--show_tracebacks=True",
            *extra_args,
            str(notebook),
        ]
        proc = subprocess.Popen(
            cmd,
            cwd=notebook.parent,
            env=env,
            stdin=subprocess.DEVNULL,
            stdout=log,
            stderr=subprocess.STDOUT,
            start_new_session=True,
        )
        started.append((proc, log))
        base_url = f"http://127.0.0.1:{port}/"
        deadline = time.monotonic() + SERVER_START_TIMEOUT
        while not _answers_200(base_url + "voila/static/favicon.ico"):
            if proc.poll() is not None:
                raise RuntimeError(
                    f"Voila exited with code {proc.returncode} before answering; "
                    f"log {log_path}:\n{_tail(log_path)}"
                )
            if time.monotonic() > deadline:
                raise RuntimeError(
                    f"Voila did not answer within {SERVER_START_TIMEOUT:.0f} s; "
                    f"log {log_path}:\n{_tail(log_path)}"
                )
            time.sleep(0.1)
        return base_url

    yield start

    for proc, log in reversed(started):
        try:
            _stop(proc)
        finally:
            log.close()
