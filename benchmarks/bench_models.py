"""Benchmark of the core models: prints figures, asserts nothing.

1. All six connections x 1000 points (saturation, armature reaction and every loss included) through
   ``Machine.characteristic``, against the same sympy expressions evaluated point by point with
   ``subs`` in the same run (the ratio is what counts; the machine is shared and noisy).
2. ``python -X importtime -c "import dcchar"``: total, and whether heavy modules were imported.

Run: ``.venv/bin/python benchmarks/bench_models.py``
"""

from __future__ import annotations

import re
import statistics
import subprocess
import sys
import time

import numpy as np


def machines():
    from dcchar import (Compound, Froehlich, PermanentMagnet, QuadraticArmatureReaction, RotationalLoss,
                        SeparatelyExcited, Series, Shunt)

    mag = Froehlich(a=320.0, b=2.5, reference_speed=120.0, residual_emf=4.0)
    common = dict(armature_resistance=0.25, brush_drop=2.0, stray_load=2e-5,
                  armature_reaction=QuadraticArmatureReaction(0.004, 1e-6),
                  rotational_loss=RotationalLoss(friction_torque=0.8, viscous=0.002, windage=2e-5, core_eddy=0.002))
    return [
        SeparatelyExcited(magnetization=mag, field_resistance=110.0, field_voltage=220.0, **common),
        Shunt(magnetization=mag, field_resistance=110.0, **common),
        Series(magnetization=mag, series_turns=0.05, series_resistance=0.08, **common),
        Compound(magnetization=mag, field_resistance=120.0, series_turns=0.01, series_resistance=0.05, **common),
        Compound(magnetization=mag, field_resistance=120.0, series_turns=0.01, series_resistance=0.05,
                 shunt_connection="short", kind="differential", **common),
        PermanentMagnet(kphi=1.6, demagnetization=2e-4, **common),
    ]


def median_time(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def sympy_subs_per_point(m, voltage, currents):
    """Evaluate the same equations with sympy ``subs`` point by point (the slow baseline)."""
    from dcchar.models import symbolic

    conn = m.connection
    s = symbolic._all_symbols()
    ex = symbolic.excitation_expressions(conn)
    out = symbolic.output_expressions(conn)
    circuit = dict(zip([s[n] for n in symbolic.CIRCUIT_PARAMETERS[conn]], m.circuit_parameters()))
    losses = dict(zip([s[n] for n in symbolic.LOSS_PARAMETERS], m._loss_parameters()))
    for i in currents:
        vals = {s["I_a"]: float(i), s["V"]: voltage, **circuit, **losses}
        if conn != "permanent_magnet":
            vals[s["F_ar"]] = float(m.armature_reaction.excitation(i))
            F = float(ex["excitation"].subs(vals))
        else:
            F = 0.0
        vals[s["k_phi"]] = float(m._kphi(F, i))
        [float(out[k].subs(vals)) for k in symbolic.OUTPUTS]


def main():
    ms = machines()
    V = 220.0
    I = np.linspace(0.0, 800.0, 1000)
    for m in ms:  # build the kernels (first use) before timing
        m.characteristic(V, I)

    def sweep():
        for m in ms:
            m.characteristic(V, I)

    t_fast = median_time(sweep, 300)
    n_sub = 5
    t_sub = 0.0
    for m in ms:
        t0 = time.perf_counter()
        sympy_subs_per_point(m, V, I[1:1 + n_sub])
        t_sub += (time.perf_counter() - t0) / n_sub * I.size
    print(f"six connections x 1000 points, characteristic(): {t_fast * 1e3:.3f} ms (median of 300)")
    print(f"same equations by sympy subs, point by point (extrapolated from {n_sub} points each): {t_sub:.1f} s")
    print(f"speed-up: {t_sub / t_fast:,.0f} x")

    out = subprocess.run([sys.executable, "-X", "importtime", "-c",
                          "import sys, dcchar; print([m for m in ('sympy','matplotlib','ipywidgets','scipy') "
                          "if m in sys.modules])"], capture_output=True, text=True, check=True)
    total_us = max(int(m.group(1)) for m in re.finditer(r"\|\s*(\d+)\s*\|\s*dcchar$", out.stderr, re.M))
    print(f"import dcchar: {total_us / 1e6:.3f} s cumulative; heavy modules imported: {out.stdout.strip()}")


if __name__ == "__main__":
    main()
