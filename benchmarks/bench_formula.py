"""Time the user-formula parser and a formula load, against baselines in the same run.

- parsing (no cache) against :func:`ast.parse` of the same text alone;
- the first evaluation (which builds the numpy function with sympy.lambdify);
- evaluation on 100 000 speeds against the same formula written by hand in numpy;
- the slowest of a set of hostile or bulky inputs (parse and derivative), against a plain
  formula's parse.

Run: python benchmarks/bench_formula.py   (prints figures; asserts nothing about speed)
"""

from __future__ import annotations

import ast
import statistics
import time

import numpy as np

from dcchar.errors import FormulaError
from dcchar.models import formula as fm
from dcchar.models.loads import FormulaLoad
from dcchar.models.units import RPM

TEXT = "12 + 0.02*n + 3.5e-6*n**2 + 4*tanh(n/50) + min(n, 1500)*1e-3"
BULKY = [
    "9**9**9",
    "(" * 190 + "n" + ")" * 190,
    "+".join(["n**12"] * 80),
    "max(" + ", ".join(f"n*{i}" for i in range(120)) + ")",
    "-" * 31 + "n",
    "exp(exp(exp(exp(n))))*sqrt(abs(sin(n)))**12",
    "*".join(["(n+1)"] * 90),
    "__import__('os').system('true')",
    "n" * 501,
    # accepted but bulky (within the length and depth limits)
    "max(" + ", ".join(f"n*{i}" for i in range(60)) + ")",
    "min(" + ", ".join(f"(n-{i})**2" for i in range(40)) + ")",
    "min(" + ", ".join(f"(n-{i})**2*exp(n/{i + 1})+sqrt(abs(n-{i}))*tanh(n/{i + 3})" for i in range(6)) + ")",
    "max(" + ", ".join("min(" + ", ".join(f"(n-{i}{j})**3" for j in range(6)) + ")" for i in range(5)) + ")",
    "sqrt(" * 15 + "n" + "+1)" * 15,
]


def _balanced(parts, op):
    while len(parts) > 1:
        parts = [f"({parts[i]}{op}{parts[i + 1]})" if i + 1 < len(parts) else parts[i]
                 for i in range(0, len(parts), 2)]
    return parts[0]


BULKY += [_balanced([f"(n+{k})**12" for k in range(24)], "*"),
          _balanced([f"{k}*n**{k % 12}" for k in range(40)], "+")]


def best(fn, repeat=7, number=1):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        for _ in range(number):
            fn()
        times.append((time.perf_counter() - t0) / number)
    return min(times), statistics.median(times)


def parse_uncached(text, derivative=False):
    try:
        f = fm._parse_cached.__wrapped__(text, "n", tuple(sorted(fm.FUNCTIONS)))
    except FormulaError:
        return None
    if derivative:
        f.derivative(np.ones(3))
    return f


def main():
    base, _ = best(lambda: ast.parse(TEXT, mode="eval"), number=200)
    parse, _ = best(lambda: parse_uncached(TEXT), number=50)
    print(f"ast.parse alone          {base * 1e6:9.1f} us")
    print(f"parse_formula (uncached) {parse * 1e6:9.1f} us   ratio {parse / base:7.1f} x ast.parse")

    first, _ = best(lambda: parse_uncached(TEXT).function(np.ones(3)), number=5)
    print(f"parse + first evaluation {first * 1e6:9.1f} us   ratio {first / base:7.1f} x ast.parse")

    n = np.linspace(0.0, 3000.0, 100_000)
    f = fm.parse_formula(TEXT).function
    f(n)

    def by_hand():
        return 12 + 0.02 * n + 3.5e-6 * n**2 + 4 * np.tanh(n / 50) + np.minimum(n, 1500) * 1e-3

    hand, _ = best(by_hand, number=20)
    ours, _ = best(lambda: f(n), number=20)
    print(f"100k points by hand      {hand * 1e3:9.3f} ms")
    print(f"100k points, Formula     {ours * 1e3:9.3f} ms   ratio {ours / hand:7.2f} x hand-written numpy")

    load = FormulaLoad(TEXT)
    w = n * RPM
    load.torque(w)
    tl, _ = best(lambda: load.torque(w), number=20)
    print(f"100k points, FormulaLoad {tl * 1e3:9.3f} ms   ratio {tl / hand:7.2f} x hand-written numpy")

    worst, worst_text = 0.0, ""
    for text in BULKY:
        t, _ = best(lambda text=text: parse_uncached(text, derivative=True), repeat=3)
        if t > worst:
            worst, worst_text = t, text
    print(f"slowest bulky/hostile, parse + derivative {worst * 1e3:9.3f} ms   ratio {worst / parse:7.1f} x plain parse"
          f"   ({worst_text[:40]!r}{'...' if len(worst_text) > 40 else ''})")


if __name__ == "__main__":
    main()
