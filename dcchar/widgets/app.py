"""The design-meeting app: the hoist walkthrough notebook served on this computer only.

:func:`serve` runs Voila (the notebook as an app, code hidden) or JupyterLab (the notebook to
edit and run) on 127.0.0.1, prints the address and how to stop it, and waits until it is
stopped with Ctrl+C. Nothing listens on any other network interface.
"""

from __future__ import annotations

import os
import secrets
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

__all__ = ["serve", "notebooks_folder", "DEFAULT_NOTEBOOK"]

#: The notebook served when none is named.
DEFAULT_NOTEBOOK = "hoist_walkthrough.ipynb"
_START_TIMEOUT = 90.0


def notebooks_folder() -> Path:
    """The ``notebooks/`` folder of the source tree dcchar runs from (installed editable)."""
    return Path(__file__).resolve().parents[2] / "notebooks"


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def _answers(url: str) -> bool:
    opener = urllib.request.build_opener(urllib.request.ProxyHandler({}))
    try:
        with opener.open(url, timeout=2) as response:
            return response.status == 200
    except (urllib.error.URLError, ConnectionError, TimeoutError, OSError):
        return False


def _command(notebook: Path, port: int, lab: bool, token: str) -> tuple[list, str, str]:
    """(command, address to open, address that answers 200 once the server is up)."""
    base = f"http://127.0.0.1:{port}/"
    if not lab:
        cmd = [sys.executable, "-m", "voila", "--no-browser", "--Voila.ip=127.0.0.1", f"--port={port}",
               "--Voila.port_retries=0", str(notebook)]
        # never poll the page itself: every request of it starts a kernel
        return cmd, base, base + "voila/static/favicon.ico"
    cmd = [sys.executable, "-m", "jupyterlab", "--no-browser", "--ServerApp.ip=127.0.0.1", f"--ServerApp.port={port}",
           "--ServerApp.port_retries=0", f"--ServerApp.root_dir={notebook.parent}",
           f"--IdentityProvider.token={token}", "--LabApp.news_url=None",
           "--LabApp.check_for_updates_class=jupyterlab.NeverCheckForUpdate"]
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        cmd.append("--allow-root")
    url = f"{base}lab/tree/{notebook.name}?token={token}"
    return cmd, url, f"{base}api/status?token={token}"


def _stop(proc: subprocess.Popen) -> int:
    if proc.poll() is None:
        proc.send_signal(signal.SIGTERM)  # the server shuts its kernels down
        try:
            proc.wait(15)
        except subprocess.TimeoutExpired:
            try:
                os.killpg(proc.pid, signal.SIGKILL)
            except (ProcessLookupError, PermissionError):
                proc.kill()
            proc.wait(15)
    return proc.returncode


def serve(notebook=None, port: int = 0, lab: bool = False) -> int:
    """Serve a notebook (default: the hoist walkthrough) on 127.0.0.1 until Ctrl+C.

    Parameters
    ----------
    notebook : str or os.PathLike, optional
        The notebook to serve. Default: ``notebooks/hoist_walkthrough.ipynb`` of the source tree.
    port : int, default 0
        TCP port on 127.0.0.1; 0 picks a free one.
    lab : bool, default False
        False: Voila (the notebook as an app). True: JupyterLab with the notebook open.

    Returns
    -------
    int
        0 when stopped with Ctrl+C; the server's exit code if it stopped by itself; 2 when the
        notebook is missing or the port is not valid.
    """
    nb = Path(notebook) if notebook is not None else notebooks_folder() / DEFAULT_NOTEBOOK
    if not nb.is_file():
        print(f"dcchar: notebook not found: {nb}", file=sys.stderr)
        return 2
    if isinstance(port, bool) or not isinstance(port, int) or not 0 <= port <= 65535:
        print(f"dcchar: port must be an integer from 0 to 65535 (0: any free port), got {port!r}", file=sys.stderr)
        return 2
    nb = nb.resolve()
    port = port or _free_port()
    token = secrets.token_urlsafe(24)
    cmd, url, probe = _command(nb, port, lab, token)
    what = "JupyterLab" if lab else "Voila"
    print(f"dcchar: starting {what} for {nb.name} on 127.0.0.1:{port} ...", flush=True)
    # a session of its own: Ctrl+C reaches this process only, which then stops the server cleanly
    proc = subprocess.Popen(cmd, cwd=str(nb.parent), stdin=subprocess.DEVNULL, start_new_session=True)
    try:
        deadline = time.monotonic() + _START_TIMEOUT
        while not _answers(probe):
            if proc.poll() is not None:
                print(f"dcchar: {what} stopped with exit code {proc.returncode}", file=sys.stderr)
                return proc.returncode
            if time.monotonic() > deadline:
                print(f"dcchar: {what} did not answer within {_START_TIMEOUT:.0f} s; stopping it", file=sys.stderr)
                _stop(proc)
                return 1
            time.sleep(0.2)
        print(f"\ndcchar: open {url}\n(serving on 127.0.0.1 only; press Ctrl+C to stop)\n", flush=True)
        return proc.wait()
    except KeyboardInterrupt:
        print("\ndcchar: stopping ...", flush=True)
        _stop(proc)
        return 0
    finally:
        if proc.poll() is None:
            _stop(proc)
