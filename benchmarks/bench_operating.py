"""Time operating points and speed-control sweeps, against plain versions of the same work in the
same run. Prints figures; asserts nothing about speed.

Run: python benchmarks/bench_operating.py

Targets: the operating points of six connections against one load in at most 1 ms in total; a
200-setting control sweep over six connections in at most 20 ms. The machines are the invented
demo frame (dcchar.studies.demo); the loads are invented too.

Each run meets a new load object; a machine keeps its load-independent bracketing grid per supply
voltage (as in use, when the load editor or the selection study asks again). A last row gives a
new supply voltage on every run, where nothing is reused.

Baselines (same run):
- operating points: a plain solve per connection, the full characteristic sweep (2000 points,
  numpy) to bracket, then brentq on a scalar function that calls ``state_arrays`` each time;
- control sweep: ``operating_points`` called once per setting (the scalar path), in a loop.
"""

from __future__ import annotations

import statistics
import time

import numpy as np
from scipy.optimize import brentq

from dcchar.models.loads import ConstantTorque, Fan
from dcchar.studies.control import control_sweep
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.operating import operating_points

SIX = list(demo_family().values())
T_R, W_R = DEMO_RATING.torque, DEMO_RATING.speed


class LightFan:
    """The fan law with plain-float arithmetic for scalar speeds: the same torque as Fan (no
    static part), to show how much of the time is spent inside the load model."""

    kind = "fan"
    inertia = 0.0
    breakaway_torque = 0.0

    def __init__(self, rated_speed, rated_torque):
        self.k = rated_torque / rated_speed**2

    def torque(self, w):
        if isinstance(w, float):
            return self.k * w * abs(w)
        return self.k * w * np.abs(w)

    def slope(self, w):
        return 2.0 * self.k * abs(w) if isinstance(w, float) else 2.0 * self.k * np.abs(w)


def timed(fn, repeats):
    out = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t)
    return statistics.median(out), min(out)


def plain_points(machine, load, voltage):
    c = machine.characteristic(voltage, np.linspace(0.0, machine.locked_rotor_current(voltage), 2000))
    with np.errstate(all="ignore"):
        f = c.shaft_torque - load.torque(c.speed)
    ok = np.isfinite(f) & c.within_safe_speed
    cells = np.flatnonzero(ok[:-1] & ok[1:] & (np.sign(f[:-1]) * np.sign(f[1:]) < 0))

    def g(i):
        s = machine.state_arrays(voltage, np.array([i]))
        return float(s["shaft_torque"][0] - load.torque(s["speed"][0]))

    return [brentq(g, c.armature_current[k], c.armature_current[k + 1], xtol=1e-10) for k in cells]


def timed_cycle(fn, cases, repeats):
    """Median and best of ``fn(case)`` over ``repeats`` runs, each on the next of ``cases``."""
    out = []
    for k in range(repeats):
        case = cases[k % len(cases)]
        t = time.perf_counter()
        fn(case)
        out.append(time.perf_counter() - t)
    return statistics.median(out), min(out)


def main():
    V = DEMO_RATING.voltage
    scales = np.linspace(0.5, 1.2, 200)
    kinds = {"ConstantTorque": lambda k: ConstantTorque(k * T_R),
             "Fan": lambda k: Fan(rated_speed=W_R, rated_torque=k * T_R),
             "LightFan": lambda k: LightFan(W_R, k * T_R)}
    # each run meets a new load object (nothing about the load is reused); the machines keep their
    # load-independent bracketing grid per supply voltage, as they do in use
    for name, make in kinds.items():
        loads = [make(k) for k in scales]
        [operating_points(m, loads[0], V) for m in SIX]  # build the kernels
        med, best = timed_cycle(lambda load: [operating_points(m, load, V) for m in SIX], loads, 400)
        bmed, _ = timed(lambda: [plain_points(m, loads[0], V) for m in SIX], 20)
        print(f"operating points, six connections, {name:14s}: median {med * 1e3:6.3f} ms, best {best * 1e3:6.3f} ms"
              f" (target 1 ms); plain solve {bmed * 1e3:7.2f} ms, ratio {bmed / med:5.1f}x")
    # a new supply voltage on every run (a slider step): the machine's grid is built each time
    loads = [kinds["Fan"](k) for k in scales]
    cases = list(zip(loads, np.linspace(0.8 * V, 1.1 * V, 397)))
    med, best = timed_cycle(lambda c: [operating_points(m, c[0], float(c[1])) for m in SIX], cases, 397)
    print(f"operating points, six connections, Fan, new supply voltage each run: median {med * 1e3:6.3f} ms, "
          f"best {best * 1e3:6.3f} ms")
    fan = Fan(rated_speed=W_R, rated_torque=T_R, static_torque=5.0)
    volts = np.linspace(40.0, 240.0, 200)
    [control_sweep(m, fan, "voltage", volts) for m in SIX]
    med, best = timed(lambda: [control_sweep(m, fan, "voltage", volts) for m in SIX], 20)
    bmed, _ = timed(lambda: [operating_points(SIX[0], fan, v) for v in volts], 3)
    print(f"control sweep, 200 voltages x six connections : median {med * 1e3:6.2f} ms, best {best * 1e3:6.2f} ms "
          f"(target 20 ms); scalar loop (x6) {6 * bmed * 1e3:7.1f} ms, ratio {6 * bmed / med:5.1f}x")
    rx = np.linspace(0.0, 2.0, 200)
    med, best = timed(lambda: [control_sweep(m, fan, "external_resistance", rx) for m in SIX], 20)
    print(f"control sweep, 200 resistances x six          : median {med * 1e3:6.2f} ms, best {best * 1e3:6.2f} ms")
    med, _ = timed(lambda: [control_sweep(m, fan, "voltage", volts, method="chandrupatla") for m in SIX], 5)
    print(f"control sweep, 200 voltages x six, scipy elementwise Chandrupatla: median {med * 1e3:6.2f} ms")


if __name__ == "__main__":
    main()
