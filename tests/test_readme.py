"""The README's example runs as printed, and its quick start names the commands CI runs."""

import re
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_readme_example_runs():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    code = re.search(r"```python\n(.*?)```", text, re.S).group(1)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert out.returncode == 0, out.stderr
    speed_rpm, efficiency, stable, _ = out.stdout.split()
    assert 0 < float(efficiency) < 1 and stable == "True" and float(speed_rpm) > 0


def test_quick_start_matches_ci():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = text[text.index("## Quick start"):text.index("## What it does")]
    assert "make demo" in quick and "make test" in quick
    assert "make test" in (ROOT / ".ci" / "run").read_text(encoding="utf-8")
