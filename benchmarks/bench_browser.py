"""Widget kit in a real browser: a key press on the voltage slider to new pixels of the chart,
under Voila serving the hoist walkthrough, in Debian's Chromium driven by Playwright. Prints
figures; asserts nothing.

Run: python benchmarks/bench_browser.py   (needs /usr/bin/chromium, or DCCHAR_CHROMIUM)

Target: median of 20 steps at most 120 ms. Also printed: key press to the new operating speed
in the results table. Per-user Jupyter and matplotlib state goes to a temporary folder; the
server listens on 127.0.0.1 only and is stopped at the end.
"""

from __future__ import annotations

import os
import re
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
NOTEBOOK = ROOT / "notebooks" / "hoist_walkthrough.ipynb"
CHROMIUM = os.environ.get("DCCHAR_CHROMIUM", "/usr/bin/chromium")
STEPS = 20

_HASH_JS = """
() => {
  const c = document.querySelector(".kit-figure canvas");
  if (!c || !c.width) return null;
  const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
  let h = 0x811c9dc5;
  for (let i = 0; i < d.length; i += 4) { h ^= d[i] ^ (d[i + 1] << 8) ^ (d[i + 2] << 16); h = Math.imul(h, 0x01000193) >>> 0; }
  return h;
}
"""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def answers(url):
    try:
        with urllib.request.build_opener(urllib.request.ProxyHandler({})).open(url, timeout=2) as r:
            return r.status == 200
    except OSError:
        return False


def main():
    from playwright.sync_api import sync_playwright

    tmp = Path(tempfile.mkdtemp(prefix="dcchar-bench-"))
    env = dict(os.environ)
    for name in ("JUPYTER_CONFIG_DIR", "JUPYTER_RUNTIME_DIR", "JUPYTER_DATA_DIR", "IPYTHONDIR", "MPLCONFIGDIR"):
        (tmp / name.lower()).mkdir()
        env[name] = str(tmp / name.lower())
    env.update(JUPYTER_PLATFORM_DIRS="1", PYDEVD_DISABLE_FILE_VALIDATION="1")
    env.pop("MPLBACKEND", None)
    env["PATH"] = os.pathsep.join([str(Path(sys.executable).parent), env.get("PATH", "")])
    port = free_port()
    log = open(tmp / "voila.log", "wb")
    proc = subprocess.Popen([sys.executable, "-m", "voila", "--no-browser", "--Voila.ip=127.0.0.1", f"--port={port}",
                             "--Voila.port_retries=0", str(NOTEBOOK)], cwd=NOTEBOOK.parent, env=env,
                            stdout=log, stderr=subprocess.STDOUT, stdin=subprocess.DEVNULL, start_new_session=True)
    base = f"http://127.0.0.1:{port}/"
    try:
        t0 = time.monotonic()
        while not answers(base + "voila/static/favicon.ico"):
            if proc.poll() is not None or time.monotonic() - t0 > 60:
                raise SystemExit(f"Voila did not start; see {tmp / 'voila.log'}")
            time.sleep(0.1)
        print(f"Voila ready in {time.monotonic() - t0:.1f} s")
        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path=CHROMIUM, args=[
                "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
                "--disable-sync", "--no-first-run"])
            ctx = browser.new_context(viewport={"width": 1280, "height": 1000})
            ctx.route(re.compile(r"^https?://(?!127\.0\.0\.1[:/])"), lambda r: r.abort())
            page = ctx.new_page()
            t0 = time.monotonic()
            page.goto(base, wait_until="domcontentloaded")
            handle = page.locator(".kit-voltage .noUi-handle")
            handle.wait_for(state="visible", timeout=60000)
            page.wait_for_function(f"({_HASH_JS})() !== null", timeout=30000)
            print(f"notebook run and comparer shown in {time.monotonic() - t0:.1f} s")
            page.wait_for_timeout(1500)  # let the first frames settle
            cell = page.locator('.kit-results td[data-key="shunt"][data-col="speed"]')
            handle.focus()
            pixels, table = [], []
            for k in range(STEPS + 3):
                old_hash = page.evaluate(_HASH_JS)
                old_cell = cell.inner_text()
                t0 = time.perf_counter()
                handle.press("ArrowRight")
                page.wait_for_function(f"(old) => ({_HASH_JS})() !== old", arg=old_hash, polling="raf",
                                       timeout=10000)
                t1 = time.perf_counter()
                page.wait_for_function("(old) => document.querySelector('.kit-results td[data-key=\"shunt\"]"
                                       "[data-col=\"speed\"]').textContent !== old", arg=old_cell, polling="raf",
                                       timeout=10000)
                t2 = time.perf_counter()
                if k >= 3:
                    pixels.append(t1 - t0)
                    table.append(t2 - t0)
                page.wait_for_timeout(150)
            status = page.locator(".kit-status").inner_text()
            browser.close()
        px = [1e3 * v for v in pixels]
        tb = [1e3 * v for v in table]
        print(f"key press -> new chart pixels: median {statistics.median(px):.0f} ms, max {max(px):.0f} ms "
              f"over {STEPS} steps (target at most 120 ms)")
        print(f"key press -> new speed in the results table: median {statistics.median(tb):.0f} ms, "
              f"max {max(tb):.0f} ms")
        print(f"last status line: {status}")
    finally:
        proc.send_signal(signal.SIGTERM)
        try:
            proc.wait(15)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait(5)
        log.close()


if __name__ == "__main__":
    main()
