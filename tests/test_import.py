"""``import dcchar`` stays light: no sympy, matplotlib or ipywidgets until they are needed."""

import subprocess
import sys


def test_import_does_not_pull_heavy_modules():
    code = ("import sys, dcchar; heavy = [m for m in ('sympy', 'matplotlib', 'ipywidgets', 'scipy') "
            "if m in sys.modules]; print(','.join(heavy))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_import_does_not_change_matplotlib_state():
    code = ("import matplotlib; b = matplotlib.get_backend(); r = dict(matplotlib.rcParams); import dcchar, "
            "dcchar.charts; print(matplotlib.get_backend() == b and dict(matplotlib.rcParams) == r)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "True"
