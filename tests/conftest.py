"""Shared fixtures for the whole test suite.

Kept small on purpose: fixtures of one area live in that area's conftest.py
(for instance tests/browser/conftest.py for the real-browser harness).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

REPO_ROOT = Path(__file__).resolve().parents[1]

# Variables that point Jupyter, IPython and matplotlib at per-user state.
ISOLATED_DIR_VARS = (
    "JUPYTER_CONFIG_DIR",
    "JUPYTER_RUNTIME_DIR",
    "JUPYTER_DATA_DIR",
    "IPYTHONDIR",
    "MPLCONFIGDIR",
)


@pytest.fixture(scope="session")
def repo_root() -> Path:
    """The root folder of the repository (the one holding pyproject.toml)."""
    return REPO_ROOT


@pytest.fixture(scope="session")
def artifacts_dir() -> Path:
    """The repository's ``test-artifacts/`` folder (git-ignored), created if missing.

    Tests write screenshots and server logs here so that a failed run leaves
    something to look at.
    """
    path = REPO_ROOT / "test-artifacts"
    path.mkdir(exist_ok=True)
    return path


@pytest.fixture(scope="session")
def isolated_env(tmp_path_factory: pytest.TempPathFactory) -> dict[str, str]:
    """Environment for child processes (servers, kernels) that ignores per-user state.

    A copy of ``os.environ`` in which JUPYTER_CONFIG_DIR, JUPYTER_RUNTIME_DIR,
    JUPYTER_DATA_DIR, IPYTHONDIR and MPLCONFIGDIR point at fresh folders of
    this test session, JUPYTER_PLATFORM_DIRS=1, PYDEVD_DISABLE_FILE_VALIDATION=1,
    and the folder of the running interpreter first on PATH (so ``jupyter``,
    ``voila`` and the kernel are those of the test environment). Returns a new
    dict each session; callers may copy and change it.
    """
    base = tmp_path_factory.mktemp("isolated-env")
    env = dict(os.environ)
    for name in ISOLATED_DIR_VARS:
        folder = base / name.lower()
        folder.mkdir()
        env[name] = str(folder)
    env["JUPYTER_PLATFORM_DIRS"] = "1"
    env["PYDEVD_DISABLE_FILE_VALIDATION"] = "1"
    bindir = str(Path(sys.executable).parent)
    env["PATH"] = os.pathsep.join([bindir, env.get("PATH", "")])
    return env
