"""Benchmark of the selection matrix and the tolerance study (prints figures; asserts nothing).

- matrix: six candidates x ten requirements, best of 15 runs; baseline: the comparison study
  (:func:`dcchar.studies.comparison.compare`) of the same six candidates in the same run.
- bands: 10,000 samples for each of six candidates; baseline: the scalar operating-point solver
  run for 200 sampled machines, scaled to 10,000 (what a Python loop over machines would cost).
- pass shares of every cell, 10,000 samples per candidate.
Targets: matrix <= 20 ms, bands <= 2 s.
"""

import time

import numpy as np

from dcchar.models.loads import Fan
from dcchar.studies.comparison import compare
from dcchar.studies.demo import DEMO_RATING as R
from dcchar.studies.demo import demo_family
from dcchar.studies.operating import operating_points
from dcchar.studies.selection import (AccelerationTime, ConstantPowerRange, Efficiency, LostLoad, LowSpeed, SpeedHold,
                                      SpeedRegulation, StartingCurrent, StartingTorque, TopSpeed, selection_matrix)
from dcchar.studies.tolerance import Spread, curve_bands, tolerance_study


def best(fn, n):
    out = []
    for _ in range(n):
        t = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t)
    return min(out)


def main():
    fam = demo_family()
    load = Fan(rated_speed=R.speed, rated_torque=0.9 * R.torque, load_inertia=0.5)
    reqs = [SpeedRegulation(value=8), TopSpeed(value=1.2 * R.speed), LowSpeed(value=0.3 * R.speed),
            StartingTorque(value=1.2, basis="running"), StartingCurrent(value=140), AccelerationTime(value=5),
            SpeedHold(value=5, step=20), Efficiency(value=0.85), ConstantPowerRange(value=2), LostLoad()]
    m = selection_matrix(fam, load, reqs)  # warm the kernels
    compare(fam, load)
    t_m = best(lambda: selection_matrix(fam, load, reqs), 15)
    t_c = best(lambda: compare(fam, load), 15)
    print(f"matrix 6 x 10: {1e3 * t_m:.1f} ms (target 20 ms); comparison study of the same candidates "
          f"{1e3 * t_c:.1f} ms; ratio {t_m / t_c:.2f}")
    curve_bands(m, Spread(), samples=200)
    t_b = best(lambda: curve_bands(m, Spread(), samples=10_000), 3)
    rng = np.random.default_rng(0)
    mach = fam["shunt"]
    loop = [mach.with_(armature_resistance=mach.armature_resistance * (1 + 0.05 * rng.uniform(-1, 1)))
            for _ in range(200)]
    t = time.perf_counter()
    for x in loop:
        operating_points(x, load)
    t_loop = (time.perf_counter() - t) / 200 * 10_000 * 6
    print(f"bands 6 x 10,000 samples: {t_b:.2f} s (target 2 s); a Python loop of scalar solves would take "
          f"~{t_loop:.1f} s; ratio {t_b / t_loop:.3f}")
    t_s = best(lambda: tolerance_study(m, Spread(), samples=10_000), 1)
    print(f"pass shares 6 x 10 cells, 10,000 samples each: {t_s:.2f} s")


if __name__ == "__main__":
    main()
