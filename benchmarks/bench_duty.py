"""Time a duty-cycle summary: rms, energy, duty-type classification and the thermal periodic
steady state, for a 10-segment cycle (and a long one), against a plain Python loop version of the
same arithmetic in the same run.

Run: python benchmarks/bench_duty.py   (prints figures; asserts nothing about speed)
"""

from __future__ import annotations

import math
import statistics
import time

from dcchar.studies.duty import DutyCycle, DutySegment, classify_duty, energy, rms
from dcchar.studies.thermal import FirstOrderThermal, periodic_cycle


def make_cycle(n_repeats: int = 1) -> DutyCycle:
    """A 10-segment hoist-like cycle of our own invention (demo data), repeated ``n_repeats`` times."""
    base = [
        DutySegment(4.0, torque=(0.0, 180.0), speed=(0.0, 150.0), power=(0.0, 27e3), losses=(300.0, 2600.0),
                    kind="start"),
        DutySegment(30.0, torque=120.0, speed=150.0, power=18e3, losses=1500.0),
        DutySegment(3.0, torque=(120.0, -90.0), speed=(150.0, 0.0), power=(18e3, 0.0), losses=(1500.0, 900.0),
                    kind="brake"),
        DutySegment(20.0, torque=90.0, speed=0.0, power=0.0, losses=700.0, kind="hold"),
        DutySegment(40.0, kind="rest"),
        DutySegment(4.0, torque=(0.0, -150.0), speed=(0.0, -150.0), power=(0.0, 22e3), losses=(300.0, 2200.0),
                    kind="start"),
        DutySegment(30.0, torque=-80.0, speed=-150.0, power=12e3, losses=1000.0),
        DutySegment(25.0, torque=-70.0, speed=-150.0, power=10.5e3, losses=900.0),
        DutySegment(3.0, torque=(-80.0, 60.0), speed=(-150.0, 0.0), power=(12e3, 0.0), losses=(1000.0, 600.0),
                    kind="brake"),
        DutySegment(60.0, kind="rest"),
    ]
    return DutyCycle(base * n_repeats)


MODEL = FirstOrderThermal(0.03, 1800.0, 5400.0)


def summary_dcchar(cycle: DutyCycle):
    cycle = DutyCycle(cycle.segments)  # a fresh cycle each call: no cached profiles
    return (rms(cycle, "torque"), energy(cycle).drawn, classify_duty(cycle).duty_type,
            periodic_cycle(MODEL, cycle).max_rise)


def _ends(seg, name, prev_end):
    v = getattr(seg, name)
    if v is None:
        return 0.0, 0.0
    if isinstance(v, tuple):
        return v
    return (prev_end, v) if seg.ramp else (v, v)


def summary_loop(cycle: DutyCycle):
    """Baseline: the same quantities by plain Python loops over the segments."""
    segs = cycle.segments
    num = den = 0.0
    drawn = 0.0
    for s in segs:
        a, b = _ends(s, "torque", 0.0)
        num += (a * a + a * b + b * b) / 3.0 * s.duration
        den += s.duration
        p0, p1 = _ends(s, "power", 0.0)
        # positive part of a linear power ramp
        if p0 >= 0 and p1 >= 0:
            drawn += (p0 + p1) / 2 * s.duration
        elif p0 > 0 or p1 > 0:
            hi = max(p0, p1)
            drawn += hi * hi / (2 * abs(p1 - p0)) * s.duration
    kinds = {s.kind for s in segs}
    duty = "S5" if "rest" in kinds and "brake" in kinds else "S4" if "rest" in kinds else "other"
    # periodic steady state: one cold pass, fixed point, second pass for the peak
    r, th, tc = MODEL.thermal_resistance, MODEL.heating_time_constant, MODEL.cooling_time_constant

    def one_pass(theta):
        peak = theta
        for s in segs:
            l0, l1 = _ends(s, "losses", 0.0)
            tau = tc if s.standstill else th
            x = s.duration / tau
            e = math.exp(-x)
            g = -math.expm1(-x) / x
            theta = r * l1 - r * (l1 - l0) * g - r * l0 * e + e * theta
            peak = max(peak, theta)
        return theta, peak

    cold, _ = one_pass(0.0)
    total = sum(s.duration / (tc if s.standstill else th) for s in segs)
    start = cold / -math.expm1(-total)
    _, peak = one_pass(start)
    return math.sqrt(num / den), drawn, duty, peak


def median_time(fn, arg, repeats: int, number: int) -> float:
    samples = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        for _ in range(number):
            fn(arg)
        samples.append((time.perf_counter() - t0) / number)
    return statistics.median(samples)


def main():
    for n_rep, repeats, number in ((1, 31, 200), (100, 15, 5)):
        cycle = make_cycle(n_rep)
        a, b = summary_dcchar(cycle), summary_loop(cycle)
        # the two versions must agree before their times mean anything (peaks: dcchar also finds
        # maxima inside ramps, the loop only at segment ends, so dcchar's is >= the loop's)
        assert math.isclose(a[0], b[0], rel_tol=1e-12) and math.isclose(a[1], b[1], rel_tol=1e-9)
        assert a[2] == b[2] and a[3] >= b[3] - 1e-9
        t_lib = median_time(summary_dcchar, cycle, repeats, number)
        t_loop = median_time(summary_loop, cycle, repeats, number)
        n = len(cycle.segments)
        print(f"{n:5d} segments: dcchar summary {t_lib * 1e6:9.1f} us   plain loop {t_loop * 1e6:9.1f} us   "
              f"ratio dcchar/loop {t_lib / t_loop:6.2f}   (median of {repeats} x {number})")
    print("summary = rms torque + energy drawn + duty type + thermal periodic steady state")


if __name__ == "__main__":
    main()
