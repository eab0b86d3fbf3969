"""Time a start-up transient through five starter steps and a ten-segment duty summary over six
connections, each against a baseline in the same run.

- Transient: dcchar's engine (LSODA, rtol 1e-6, events for the switching) against (a) the same
  engine with solve_ivp's default tolerances (RK45, rtol 1e-3) and (b) the same equations stepped
  by a fixed-step classical Runge-Kutta loop in pure Python (step 50 us, switching tested after
  each step), with the error of each against a tight reference (rtol 1e-10).
- Duty: :func:`dcchar.studies.duty_machine.compare_duty` (one operating point per distinct load
  and direction, reversed passive loads mirrored) against a plain loop that solves the operating
  point of every segment.

Targets: the start at most 50 ms, the duty summary at most 10 ms (medians).

Run: python benchmarks/bench_transients.py   (prints figures; asserts nothing about speed)
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from dcchar.models.loads import ConstantTorque, Fan
from dcchar.studies.demo import demo_family
from dcchar.studies.duty import DutyCycle, DutySegment, classify_duty, rms
from dcchar.studies.duty_machine import MachineSegment, compare_duty
from dcchar.studies.operating import operating_points
from dcchar.studies.starter_steps import starter_steps
from dcchar.studies._transient_engine import _Circuit
from dcchar.studies.transients import simulate_start


def median_ms(fn, repeat):
    fn()  # warm-up (kernels built, caches filled)
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return 1e3 * statistics.median(times)


# ---- the start: invented demo data (the demo frame's shunt connection on a fan)
MACHINE = demo_family()["shunt"]
LOAD = Fan(rated_speed=125.0, rated_torque=80.0, static_torque=4.0, load_inertia=0.6)
DESIGN = starter_steps(230.0, MACHINE.loop_resistance(), 2.0 * MACHINE.rating.current, sections=5,
                       brush_drop=MACHINE.brush_drop)


def start(rtol=1e-6, method="LSODA"):
    return simulate_start(MACHINE, LOAD, starter=DESIGN, rtol=rtol, method=method)


def start_fixed_step(dt=5e-5, t_end=None):
    """Baseline: the same right-hand side, classical RK4 with a fixed step, pure Python."""
    J = MACHINE.inertia + LOAD.inertia
    base = MACHINE.loop_resistance()
    totals = list(DESIGN.total_resistance)
    i2 = DESIGN.min_current
    mode = (False, 1.0, False, 1.0)
    y = None
    t = 0.0
    switch_times = []
    for j, total in enumerate(totals):
        c = _Circuit(MACHINE, J, armature_voltage=230.0, external_resistance=total - base)
        if y is None:
            y = c.initial_state() + [0.0] * 9
        last = j == len(totals) - 1
        t_stop = t + (t_end if last else 30.0)
        while t < t_stop:
            k1 = c.derivatives(t, y, mode, LOAD)[0]
            k2 = c.derivatives(t + dt / 2, [a + dt / 2 * b for a, b in zip(y, k1)], mode, LOAD)[0]
            k3 = c.derivatives(t + dt / 2, [a + dt / 2 * b for a, b in zip(y, k2)], mode, LOAD)[0]
            k4 = c.derivatives(t + dt, [a + dt * b for a, b in zip(y, k3)], mode, LOAD)[0]
            y = [a + dt / 6 * (p + 2 * q + 2 * r + s) for a, p, q, r, s in zip(y, k1, k2, k3, k4)]
            t += dt
            if not last and k1[0] < 0 and y[0] <= i2:
                switch_times.append(t)
                break
    return np.array(switch_times), y[1]


def main():
    ref = start(rtol=1e-10)
    fast = start()
    loose = start(rtol=1e-3, method="RK45")
    t_end = ref.time[-1] - ref.switch_times[-1]
    print(f"start-up transient: {MACHINE.label}, fan load, {DESIGN.sections} starter sections, "
          f"{ref.duration:.3f} s simulated")
    m_fast = median_ms(start, 15)
    m_loose = median_ms(lambda: start(rtol=1e-3, method="RK45"), 15)
    t0 = time.perf_counter()
    sw_fixed, w_fixed = start_fixed_step(t_end=t_end)
    m_fixed = 1e3 * (time.perf_counter() - t0)

    def err(sw, w):
        sw_err = np.max(np.abs(np.asarray(sw) - np.asarray(ref.switch_times)))
        return sw_err, abs(w - ref.final_speed) / ref.final_speed

    e_fast, e_loose, e_fixed = err(fast.switch_times, fast.final_speed), err(loose.switch_times, loose.final_speed), \
        err(sw_fixed, w_fixed)
    print(f"  dcchar (LSODA, rtol 1e-6):        {m_fast:8.2f} ms   switching-time error {e_fast[0]:.2e} s, "
          f"final-speed error {e_fast[1]:.1e}, energy residual {fast.energy.relative_residual:.1e}")
    print(f"  solve_ivp defaults (RK45, 1e-3):  {m_loose:8.2f} ms   switching-time error {e_loose[0]:.2e} s, "
          f"final-speed error {e_loose[1]:.1e}   ratio {m_loose / m_fast:.2f}")
    print(f"  fixed-step RK4 loop (50 us, 1x):  {m_fixed:8.2f} ms   switching-time error {e_fixed[0]:.2e} s, "
          f"final-speed error {e_fixed[1]:.1e}   ratio {m_fixed / m_fast:.1f}")
    print(f"  target <= 50 ms: {'met' if m_fast <= 50 else 'NOT met'}")

    # ---- the duty summary: ten segments over the six connections of the demo frame
    fam = demo_family()
    a, b, c = (ConstantTorque(x, load_inertia=0.5) for x in (60.0, 90.0, 30.0))
    segs = [MachineSegment(3.0, kind="start", current=90.0), MachineSegment(30.0, a), MachineSegment(20.0, b),
            MachineSegment(2.0, kind="brake", current=70.0), MachineSegment(20.0, kind="rest"),
            MachineSegment(3.0, kind="start", current=90.0, direction=-1), MachineSegment(25.0, c, direction=-1),
            MachineSegment(15.0, a, direction=-1), MachineSegment(2.0, kind="brake", current=70.0, direction=-1),
            MachineSegment(30.0, kind="rest")]

    def plain_loop():
        out = {}
        for key, m in fam.items():
            duty = []
            for s in segs:
                if s.kind == "run":
                    p = operating_points(m, s.load).point
                    d = s.direction
                    duty.append(DutySegment(s.duration, torque=d * p.torque, current=d * p.armature_current,
                                            power=p.input_power, speed=d * p.speed, kind="run"))
                elif s.kind == "rest":
                    duty.append(DutySegment(s.duration, kind="rest"))
                else:
                    st = m.state_arrays(230.0, np.array([s.current]))
                    duty.append(DutySegment(s.duration, torque=float(st["developed_torque"][0]),
                                            current=s.current, power=0.0, speed=0.0, kind=s.kind))
            cyc = DutyCycle(duty)
            out[key] = (rms(cyc, "current"), classify_duty(cyc, load_quantity="current").designation)
        return out

    m_duty = median_ms(lambda: compare_duty(fam, segs), 25)
    m_plain = median_ms(plain_loop, 25)
    res = compare_duty(fam, segs)
    ref_loop = plain_loop()
    worst = max(abs(res[k].rms_current - ref_loop[k][0]) / ref_loop[k][0] for k in fam)
    print(f"duty summary: {len(segs)} segments x {len(fam)} connections")
    print(f"  dcchar compare_duty:              {m_duty:8.2f} ms   (rms currents agree with the loop to {worst:.1e})")
    print(f"  plain loop, a point per segment:  {m_plain:8.2f} ms   ratio {m_plain / m_duty:.2f}")
    print(f"  target <= 10 ms: {'met' if m_duty <= 10 else 'NOT met'}")
    for k, r in res.items():
        print(f"    {r.machine.label:34s} rms {r.rms_current:6.2f} A ({r.rated_current_ratio:4.2f} x rated), "
              f"peak {r.peak_current:6.1f} A, {r.duty.designation.split(' J_M')[0]}")


if __name__ == "__main__":
    main()
