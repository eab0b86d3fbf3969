"""Tests of the user-formula parser (dcchar.models.formula).

The parser is held against sympy itself: for generated syntax trees the expected expression is
built directly with sympy from the tree (never from the text), and the parser's rules for what it
must reject are re-stated here from the module docstring. Hostile strings must all be rejected,
and sentinels prove that nothing in them was ever imported, called or evaluated.
"""

from __future__ import annotations

import ast
import builtins
import inspect
import math
import sys
import numpy as np
import pytest
import sympy
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from dcchar.errors import FormulaError, ParameterError
from dcchar.models import formula as formula_module
from dcchar.models.formula import MAX_ARGUMENTS, MAX_CONSTANT, MAX_DEPTH, MAX_EXPONENT, MAX_LENGTH, parse_formula

N = sympy.Symbol("n", real=True)
SAMPLES = np.array([-2.5, -0.7, 0.0, 0.3, 1.0, 2.0, 7.5, 150.0])

# --------------------------------------------------------------------------------------------
# Sentinels: hostile strings name these; if any of them were evaluated, a flag would be raised.
# --------------------------------------------------------------------------------------------
TRAP_MODULE = "dcchar_trap_module"
TRAP_NAME = "__dcchar_sentinel__"
FIRED: list[str] = []


@pytest.fixture(autouse=True)
def sentinels(monkeypatch):
    """Trap __import__ of a marker module, a marker builtin, eval/exec/compile of any source that
    mentions a marker, and every string handed to sympy's string parser."""
    FIRED.clear()
    real_import = builtins.__import__
    real_eval, real_exec, real_compile = builtins.eval, builtins.exec, builtins.compile

    def guarded_import(name, *args, **kwargs):
        if name == TRAP_MODULE:
            FIRED.append(f"import {name}")
        return real_import(name, *args, **kwargs)

    def marked(source):
        return isinstance(source, (str, bytes)) and (TRAP_MODULE in str(source) or TRAP_NAME in str(source))

    def guarded(real, label):
        def run(source, globals=None, locals=None, *args, **kwargs):
            if marked(source):
                FIRED.append(f"{label}: {source!r}")
            if globals is None:  # behave as if called from the caller's frame
                frame = sys._getframe(1)
                globals, locals = frame.f_globals, (frame.f_locals if locals is None else locals)
            return real(source, globals, locals, *args, **kwargs)
        return run

    def guarded_compile(source, filename, mode, flags=0, *args, **kwargs):
        # ast.parse compiles to a syntax tree only (PyCF_ONLY_AST): that is reading, not running
        if marked(source) and not flags & ast.PyCF_ONLY_AST:
            FIRED.append(f"compile: {source!r}")
        return real_compile(source, filename, mode, flags, *args, **kwargs)

    import sympy.parsing.sympy_parser as sympy_parser

    real_parse_expr = sympy_parser.parse_expr

    def guarded_parse_expr(s, *args, **kwargs):
        FIRED.append(f"parse_expr: {s!r}")
        return real_parse_expr(s, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", guarded_import)
    monkeypatch.setattr(builtins, "eval", guarded(real_eval, "eval"))
    monkeypatch.setattr(builtins, "exec", guarded(real_exec, "exec"))
    monkeypatch.setattr(builtins, "compile", guarded_compile)
    monkeypatch.setattr(builtins, TRAP_NAME, lambda *a, **k: FIRED.append("sentinel called"), raising=False)
    monkeypatch.setattr(sympy_parser, "parse_expr", guarded_parse_expr)
    yield
    assert FIRED == [], f"user text reached an evaluator: {FIRED}"


def test_sentinels_do_fire_when_text_is_evaluated():
    # The sentinels must be able to fail: evaluating a hostile string trips them.
    eval(f"{TRAP_NAME}()")  # noqa: S307 - deliberate, to prove the trap works
    with pytest.raises(ImportError):
        eval(f"__import__('{TRAP_MODULE}')")  # noqa: S307
    sympy.sympify("n + 1")
    assert len(FIRED) >= 3
    FIRED.clear()


def test_module_source_calls_no_evaluator():
    # Static check of the parser's own code: no eval/exec/compile, no sympify/parse_expr/S.
    tree = ast.parse(inspect.getsource(formula_module))
    forbidden = {"eval", "exec", "compile", "sympify", "parse_expr", "S", "__import__", "getattr", "Function"}
    names = {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}
    attrs = {n.attr for n in ast.walk(tree) if isinstance(n, ast.Attribute)}
    assert not (forbidden & (names | attrs)), forbidden & (names | attrs)


# --------------------------------------------------------------------------------------------
# Worked examples: each expected expression is written with sympy directly.
# --------------------------------------------------------------------------------------------
EXAMPLES = [
    ("5 + 0.02*n + 3e-5*n**2", 5 + sympy.Float(0.02) * N + sympy.Float(3e-5) * N**2),
    ("-n**2", -(N**2)),                       # ** binds tighter than unary minus (Python rules)
    ("2**-1*n", N / 2),
    ("n/2/4", N / 8),                         # left-associative
    ("2**3**2", sympy.Integer(512)),          # right-associative: 2**(3**2)
    ("(n + 1)*(n - 1)", (N + 1) * (N - 1)),
    ("sqrt(n) + exp(-n) + log(n + 1)", sympy.sqrt(N) + sympy.exp(-N) + sympy.log(N + 1)),
    ("abs(n)*tanh(n/100)", sympy.Abs(N) * sympy.tanh(N / 100)),
    ("min(n, 5, n**2) + max(n, 0)", sympy.Min(N, 5, N**2) + sympy.Max(N, 0)),
    ("sin(n) - cos(2*n)", sympy.sin(N) - sympy.cos(2 * N)),
    ("n**(1/3)", N ** sympy.Rational(1, 3)),
    ("n**12 + n**-12", N**12 + N**-12),
    ("\u2212n + 3", 3 - N),                   # Unicode minus accepted as '-'
    ("  7  ", sympy.Integer(7)),
    ("n - n + 2", sympy.Integer(2)),
]


@pytest.mark.parametrize("text, expected", EXAMPLES)
def test_examples_equal_sympy_built_directly(text, expected):
    f = parse_formula(text)
    assert sympy.simplify(f.expression - expected) == 0
    assert f.text == text and f.variable == "n"
    ref = sympy.lambdify(N, expected, "numpy")
    with np.errstate(all="ignore"):
        want = np.broadcast_to(np.asarray(ref(SAMPLES), dtype=float), SAMPLES.shape)
    got = f.function(SAMPLES)
    assert got.dtype == np.float64 and got.shape == SAMPLES.shape
    np.testing.assert_allclose(got, want, rtol=1e-12, atol=0, equal_nan=True)


def test_other_variable_and_function_subset():
    f = parse_formula("3*w + sqrt(w)", variable="w", allowed_functions=("sqrt",))
    w = sympy.Symbol("w", real=True)
    assert sympy.simplify(f.expression - (3 * w + sympy.sqrt(w))) == 0
    with pytest.raises(FormulaError) as e:
        parse_formula("exp(w)", variable="w", allowed_functions=("sqrt",))
    assert e.value.position == 0
    with pytest.raises(FormulaError):
        parse_formula("n", variable="w")
    for bad in ("sqrt", "_x", "2n", "ñ", 3):
        with pytest.raises(ParameterError):
            parse_formula("1", variable=bad)
    with pytest.raises(ParameterError):
        parse_formula("1", allowed_functions=("open",))
    with pytest.raises(ParameterError):
        parse_formula(b"n")


def test_evaluation_shapes_and_dtype():
    f = parse_formula("3")                       # constant: broadcast to the input's shape
    assert f.function([1, 2, 3]).tolist() == [3.0, 3.0, 3.0]
    g = parse_formula("n**2")
    out = g.function(np.arange(6, dtype=int).reshape(2, 3))
    assert out.dtype == np.float64 and out.shape == (2, 3) and out[1, 2] == 25.0
    scalar = g.function(4)
    assert isinstance(scalar, np.ndarray) and scalar.shape == () and float(scalar) == 16.0
    # no real value: nan, and no numpy warning (pytest turns warnings into errors)
    h = parse_formula("sqrt(n) + log(n)")
    assert np.isnan(h.function(-1.0))
    assert np.isinf(parse_formula("1/n").function(0.0))
    with pytest.raises(ParameterError):
        g.function("fast")


def test_derivative_is_sympy_diff():
    f = parse_formula("4 + 0.5*n**2 + sqrt(n)")
    x = np.array([0.5, 2.0, 9.0])
    np.testing.assert_allclose(f.derivative(x), x + 0.5 / np.sqrt(x), rtol=1e-12)
    m = parse_formula("max(n, 5)")
    np.testing.assert_allclose(m.derivative([1.0, 5.0, 7.0]), [0.0, 0.5, 1.0])
    q = parse_formula("min((n - 1)**2, (n - 3)**2, 4)")   # piecewise: 2(n-1), 2(n-3), 0
    np.testing.assert_allclose(q.derivative([0.5, 2.5, 6.0]), [-1.0, -1.0, 0.0])


def test_results_are_cached():
    a = parse_formula("1 + n")
    assert parse_formula("1 + n") is a
    assert a.function is a.function


# --------------------------------------------------------------------------------------------
# Rejections, each with the character it must point at.
# --------------------------------------------------------------------------------------------
REJECTED = [
    ("__import__('os')", 0, "unknown function"),
    ("().__class__", 2, "attribute"),
    ("n.real.imag", 1, "attribute"),
    ("sqrt(n).conjugate()", 7, "attribute"),
    ("lambda: 1", 0, "lambda"),
    ("9**9**9", 3, "exponent"),
    ("n**13", 3, "exponent"),
    ("n**(6*2+1)", 4, "exponent"),
    ("2**n", 3, "exponent must not contain"),
    ("n**n", 3, "exponent must not contain"),
    ("log(-1)", 0, "no real value"),
    ("sqrt(-4) + n", 0, "no real value"),
    ("(-8)**(1/3)", 4, "fractional"),
    ("0**-1", 1, "negative power"),
    ("1/0", 1, "division by zero"),
    ("n + 1/(n - n)", 5, "division by zero"),
    ("exp(1000)", 0, "too large"),
    ("1e999", 0, "finite"),
    ("n ^ 2", 2, "**"),
    ("(n + 1) ^ 2", 8, "**"),
    ("n // 2", 2, "floor"),
    ("n % 2", 2, "remainder"),
    ("x + 1", 0, "unknown name"),
    ("pi*n", 0, "unknown name"),
    ("sqrt", 0, "parentheses"),
    ("sqrt(n, 2)", 0, "exactly one"),
    ("min(n)", 0, "2 to 6"),
    ("max(n, 1, 2, 3, 4, 5, 6)", 0, "2 to 6"),
    ("min(min(min(n, n**2), n**3, sin(n)), cos(n), tanh(n), -n)", 0, "more than 6"),
    ("max(n, key=1)", 7, "keyword"),
    ("sqrt(*n)", 5, "starred"),
    ("open('f')", 0, "unknown function"),
    ("(n)(2)", 1, "unknown function"),
    ("n.real(2)", 1, "attribute"),
    ("n # note", 2, "comment"),
    ("f'{n}'", 0, "f-string"),
    ("'text'", 0, "str"),
    ("1j*n", 0, "complex"),
    ("True + n", 0, "bool"),
    ("None", 0, "NoneType"),
    ("n < 3", 2, "comparison"),
    ("n and 1", 2, "and"),
    ("n if n else 1", 2, "conditional"),
    ("n[0]", 1, "subscript"),
    ("[n, 1]", 0, "List"),
    ("(n := 2)", 1, "NamedExpr"),
    ("n +", 3, "syntax"),
    ("n 2", 2, "syntax"),
    ("", 0, "empty"),
    ("   ", 0, "empty"),
    ("n\x00", 1, "character"),
    ("\uff4e + 1", 0, "character"),           # fullwidth n: not folded into 'n'
    ("n + \u00b2", 4, "character"),
    ("-" * MAX_DEPTH + "n", MAX_DEPTH, "nested"),
    ("n" * (MAX_LENGTH + 1), MAX_LENGTH, "too long"),
    ("(" * 240 + "n" + ")" * 240, None, "nested"),
    ("(" * 300 + "n" + ")" * 300, MAX_LENGTH, "too long"),
]


@pytest.mark.parametrize("text, position, fragment", REJECTED)
def test_rejected_with_position(text, position, fragment):
    with pytest.raises(FormulaError) as e:
        parse_formula(text)
    err = e.value
    assert fragment.lower() in str(err).lower()
    assert err.text == text
    if position is not None:
        assert err.position == position, (err.position, str(err))


def test_depth_limit_is_exact():
    parse_formula("-" * (MAX_DEPTH - 1) + "n")  # MAX_DEPTH levels: accepted
    with pytest.raises(FormulaError):
        parse_formula("-" * MAX_DEPTH + "n")


def test_exponent_limit_is_exact():
    for text in ("n**12", "n**-12", "n**(6*2)", "n**12.0", "2**(3*4)", "n**(-0.5)"):
        parse_formula(text)
    for text in ("n**12.5", "n**-13", "n**(sqrt(200))"):
        with pytest.raises(FormulaError):
            parse_formula(text)


def test_constant_size_limit():
    parse_formula("1e300*n")
    with pytest.raises(FormulaError):
        parse_formula("1e300*10 + n")
    with pytest.raises(FormulaError):
        parse_formula("1" + "0" * 301 + "*n")


# --------------------------------------------------------------------------------------------
# Generated syntax trees: text and expected sympy expression built independently from one tree.
# --------------------------------------------------------------------------------------------
_UNARY_FUNCTIONS = ("sqrt", "exp", "log", "abs", "sin", "cos", "tanh")
_SYMPY_FUNCTIONS = {"sqrt": sympy.sqrt, "exp": sympy.exp, "log": sympy.log, "abs": sympy.Abs,
                    "sin": sympy.sin, "cos": sympy.cos, "tanh": sympy.tanh}
_MATH_FUNCTIONS = {"sqrt": math.sqrt, "exp": math.exp, "log": math.log, "abs": abs,
                   "sin": math.sin, "cos": math.cos, "tanh": math.tanh}
_NUMPY_FUNCTIONS = {"sqrt": np.sqrt, "exp": np.exp, "log": np.log, "abs": np.abs,
                    "sin": np.sin, "cos": np.cos, "tanh": np.tanh}

numbers = st.one_of(st.integers(0, 1000),
                    st.floats(1e-3, 1e4, allow_nan=False, allow_infinity=False),
                    st.sampled_from([0.5, 0.25, 1.5, 2.0, 1e-6, 0.0]))
leaves = st.one_of(numbers.map(lambda v: ("num", v)), st.just(("var",)))


def _extend(children):
    return st.one_of(
        st.tuples(st.just("neg"), children),
        st.tuples(st.just("pos"), children),
        st.tuples(st.just("bin"), st.sampled_from("+-*/"), children, children),
        st.tuples(st.just("pow"), children, st.one_of(st.integers(-13, 13).map(lambda v: ("num", v)),
                                                      st.sampled_from([("num", 0.5), ("num", 1.5)]),
                                                      children)),
        st.tuples(st.just("call"), st.sampled_from(_UNARY_FUNCTIONS), st.tuples(children)),
        st.tuples(st.just("call"), st.sampled_from(("min", "max")),
                  st.lists(children, min_size=2, max_size=3).map(tuple)),
    )


trees = st.recursive(leaves, _extend, max_leaves=12)


def render(t):
    """Text of a tree, fully parenthesized."""
    tag = t[0]
    if tag == "num":
        return repr(t[1])
    if tag == "var":
        return "n"
    if tag == "neg":
        return f"(-{render(t[1])})"
    if tag == "pos":
        return f"(+{render(t[1])})"
    if tag == "bin":
        return f"({render(t[2])} {t[1]} {render(t[3])})"
    if tag == "pow":
        return f"({render(t[1])}**{render(t[2])})"
    return f"{t[1]}({', '.join(render(a) for a in t[2])})"


class Rejected(Exception):
    """The documented rules say the parser must reject this tree."""


def reference(t, depth=1):
    """(sympy expression, constant value or None) of a tree, applying the documented rules."""
    if depth > MAX_DEPTH:
        raise Rejected("depth")
    expr, value = _reference(t, depth)
    if value is None and expr.is_extended_real is False:
        raise Rejected("never real")
    if value is None and not expr.free_symbols:
        try:
            z = complex(expr.evalf())
        except (TypeError, ValueError, OverflowError):
            raise Rejected("not a number") from None
        if z.imag != 0:
            raise Rejected("complex")
        value = z.real
    if value is not None and not (math.isfinite(value) and abs(value) <= MAX_CONSTANT):
        raise Rejected("constant")
    return expr, value


def _reference(t, depth):
    tag = t[0]
    if tag == "num":
        v = t[1]
        return (sympy.Integer(v) if isinstance(v, int) else sympy.Float(v)), float(v)
    if tag == "var":
        return N, None
    if tag in ("neg", "pos"):
        e, v = reference(t[1], depth + 1)
        if tag == "pos":
            return e, v
        return -e, (None if v is None else -v)
    if tag == "bin":
        (a, av), (b, bv) = reference(t[2], depth + 1), reference(t[3], depth + 1)
        const = av is not None and bv is not None
        op = t[1]
        if op == "/" and bv == 0.0:
            raise Rejected("division by zero")
        ops = {"+": (lambda x, y: x + y), "-": (lambda x, y: x - y),
               "*": (lambda x, y: x * y), "/": (lambda x, y: x / y)}
        return ops[op](a, b), (ops[op](av, bv) if const else None)
    if tag == "pow":
        (a, av), (b, bv) = reference(t[1], depth + 1), reference(t[2], depth + 1)
        if bv is None or abs(bv) > MAX_EXPONENT:
            raise Rejected("exponent")
        value = None
        if av is not None:
            if (av == 0.0 and bv < 0) or (av < 0 and bv != int(bv)):
                raise Rejected("power domain")
            try:
                value = av ** bv
            except OverflowError:
                raise Rejected("overflow") from None
        return a ** b, value
    name, args = t[1], t[2]
    built = [reference(a, depth + 1) for a in args]
    exprs, values = [e for e, _ in built], [v for _, v in built]
    const = all(v is not None for v in values)
    if name in ("min", "max"):
        f = sympy.Min if name == "min" else sympy.Max
        if isinstance(f(*exprs), (sympy.Min, sympy.Max)) and len(f(*exprs).args) > MAX_ARGUMENTS:
            raise Rejected("too many min/max arguments")
        return f(*exprs), ((min(values) if name == "min" else max(values)) if const else None)
    (v,) = values
    value = None
    if v is not None:
        if (name == "sqrt" and v < 0) or (name == "log" and v <= 0):
            raise Rejected("domain")
        try:
            value = _MATH_FUNCTIONS[name](v)
        except OverflowError:
            raise Rejected("overflow") from None
    return _SYMPY_FUNCTIONS[name](exprs[0]), value


def numeric(t, x):
    """Evaluate a tree with numpy on floats; also return the largest magnitude met on the way."""
    tag = t[0]
    if tag == "num":
        v = np.full_like(x, float(t[1]))
        return v, np.abs(v)
    if tag == "var":
        return x.copy(), np.abs(x)
    if tag in ("neg", "pos"):
        v, m = numeric(t[1], x)
        return (-v if tag == "neg" else v), m
    if tag in ("bin", "pow"):
        left, right = (t[2], t[3]) if tag == "bin" else (t[1], t[2])
        (a, ma), (b, mb) = numeric(left, x), numeric(right, x)
        r = {"+": a + b, "-": a - b, "*": a * b, "/": a / b}[t[1]] if tag == "bin" else np.power(a, b)
        return r, np.fmax(np.fmax(ma, mb), np.abs(r))
    parts = [numeric(a, x) for a in t[2]]
    m = parts[0][1]
    for _, mi in parts[1:]:
        m = np.fmax(m, mi)
    if t[1] in ("min", "max"):
        r = parts[0][0]
        for v, _ in parts[1:]:
            r = np.minimum(r, v) if t[1] == "min" else np.maximum(r, v)
    else:
        r = _NUMPY_FUNCTIONS[t[1]](parts[0][0])
    return r, np.fmax(m, np.abs(r))


@settings(max_examples=3000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(trees)
def test_generated_trees_parse_to_the_same_expression(tree):
    text = render(tree)
    try:
        expected, _ = reference(tree)
    except Rejected:
        expected = None
    if len(text) > MAX_LENGTH:
        expected = None
    if expected is None:
        with pytest.raises(FormulaError) as e:
            parse_formula(text)
        assert 0 <= e.value.position <= len(text)
        return
    f = parse_formula(text)
    # the same expression as sympy builds from the tree (structurally equal: both are sympy's
    # canonical form of the same operations)
    assert f.expression == expected, (text, f.expression, expected)
    # and numerically against a plain numpy evaluation of the tree, where that is well conditioned
    with np.errstate(all="ignore"):
        want, magnitude = numeric(tree, SAMPLES)
    got = f.function(SAMPLES)
    assert got.dtype == np.float64 and got.shape == SAMPLES.shape
    ok = np.isfinite(want) & np.isfinite(got) & (magnitude < 1e8)
    assert np.all(np.abs(got[ok] - want[ok]) <= 1e-7 * (1.0 + magnitude[ok])), text


# --------------------------------------------------------------------------------------------
# Hostile strings: every one is rejected, pointing inside the hostile part, and nothing fires.
# --------------------------------------------------------------------------------------------
HOSTILE = [
    f"__import__('{TRAP_MODULE}')",
    f"__import__('{TRAP_MODULE}').system('true')",
    f"{TRAP_NAME}()",
    f"sqrt({TRAP_NAME}())",
    "().__class__.__bases__[0].__subclasses__()",
    "n.__class__.__mro__",
    "sqrt.__globals__",
    f"(lambda: {TRAP_NAME}())()",
    f"[{TRAP_NAME}() for _ in (1, 2)]",
    f"{{{TRAP_NAME}(): 1}}",
    f"f'{{{TRAP_NAME}()}}'",
    f"(n if {TRAP_NAME}() else n)",
    f"eval('{TRAP_NAME}()')",
    f"exec('{TRAP_NAME}()')",
    f"compile('{TRAP_NAME}()', 'x', 'eval')",
    "getattr(n, 'real')",
    f"max(n, key={TRAP_NAME})",
    f"min(*[{TRAP_NAME}(), 2])",
    "open('/etc/passwd').read()",
    "9**9**9",
    "(10**12)**(10**12)",
    "n**99",
    "2**n",
    "1j*n",
    "'a'*10",
    "b'x'",
    "n @ n",
    f"({TRAP_NAME} := 1)",
    "__builtins__",
    f"globals()['{TRAP_NAME}']()",
    "sqrt(n)(2)",
    "n[0]",
    "exp(exp(exp(10)))",
    "...",
    "n if n else n",
    "not n",
    "~n",
    "n << 2",
    "n == n",
    f"{TRAP_NAME}",
]


@settings(max_examples=3000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from([text for text, _ in EXAMPLES]), st.sampled_from(HOSTILE), st.sampled_from(["{v} + {h}", "{h} * {v}", "sqrt({h})",
                                                                     "min({v}, {h})", "({v}) - ({h})", "{h}"]))
def test_hostile_strings_are_rejected_inside_the_hostile_part(valid, hostile, template):
    text = template.format(v=valid, h=hostile)
    with pytest.raises(FormulaError) as e:
        parse_formula(text)
    if len(text) <= MAX_LENGTH:
        start = text.index(hostile)
        assert start <= e.value.position <= start + len(hostile), (text, e.value.position, str(e.value))
    else:
        assert e.value.position == MAX_LENGTH


_ALPHABET = list("n0123456789.+-*/() ,e_[]'\"=<>:^%@~!{}\\#\t") + ["sqrt", "exp", "log", "abs", "min", "max",
                                                                   "sin", "cos", "tanh", "**", "lambda", "__",
                                                                   "import", "os", "\u2212", "\u00e9"]


@settings(max_examples=4000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from(_ALPHABET), max_size=30).map("".join))
def test_random_text_is_a_formula_or_a_formula_error(text):
    try:
        f = parse_formula(text)
    except FormulaError as e:
        assert 0 <= e.position <= len(text)
        return
    # accepted: a real formula in n that evaluates to floats of the input's shape
    assert f.expression.free_symbols <= {N}
    out = f.function(SAMPLES)
    assert out.dtype == np.float64 and out.shape == SAMPLES.shape


@settings(max_examples=200, deadline=None)
@given(st.text(min_size=MAX_LENGTH + 1, max_size=MAX_LENGTH + 300))
def test_long_text_rejected_at_the_limit(text):
    with pytest.raises(FormulaError) as e:
        parse_formula(text)
    assert e.value.position == MAX_LENGTH

