"""The Jupyter widget kit: the comparer of field connections, its load editor and the demo app.

The only part of dcchar that imports ipywidgets (and ipympl). Names are loaded on first use, so
``import dcchar.widgets`` alone stays cheap (the command line imports :mod:`.app` only).

- :class:`Comparer` (in :mod:`.comparer`): candidate connections on one load, with sliders,
  a live chart, the results table and the cautions;
- :class:`LoadEditor` (in :mod:`.load_editor`): build a load from the trade's inputs, a formula
  or a CSV table;
- :func:`serve` (in :mod:`.app`): serve the hoist walkthrough notebook with Voila or JupyterLab.
"""

from __future__ import annotations

import importlib

__all__ = ["Comparer", "LoadEditor", "serve"]

_WHERE = {"Comparer": ".comparer", "LoadEditor": ".load_editor", "serve": ".app"}


def __getattr__(name):
    if name in _WHERE:
        return getattr(importlib.import_module(_WHERE[name], __name__), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def __dir__():
    return sorted(list(globals()) + list(_WHERE))
