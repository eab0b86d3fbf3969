"""A safe parser for torque formulas typed by the user, such as ``"12 + 0.004*n**2"``.

The text is read with Python's own tokenizer and grammar (:func:`ast.parse` in ``"eval"`` mode)
and the resulting syntax tree is walked against a short whitelist. Each accepted node is turned
into the matching sympy object by hand, so the user's text is never evaluated, executed or handed
to a string-reading sympy function.

The grammar accepted
--------------------
- numbers: integer and decimal literals (``3``, ``0.25``, ``1e-3``); no complex literals, no
  ``True``/``False``/``None``, no strings;
- the one speed variable (``n`` by default);
- the operators ``+ - * / **``, unary ``+`` and ``-``, and parentheses;
- the functions ``sqrt exp log abs sin cos tanh`` (one argument each; ``log`` is the natural
  logarithm) and ``min max`` (2 to :data:`MAX_ARGUMENTS` = 6 arguments, also counted after sympy
  merges nested ones: sympy's ``Min``/``Max`` compare their arguments pairwise, so their cost
  grows fast with the count).

Everything else is rejected with a :class:`~dcchar.errors.FormulaError` whose ``position`` is the
0-based index of the offending character in the text: other names, attribute access, subscripts,
calls of anything not listed, keyword or starred arguments, lambdas, comparisons, ``and``/``or``,
conditional expressions, f-strings, ``//``, ``%``, ``^`` (the message suggests ``**``) and so on.

Limits
------
- at most :data:`MAX_LENGTH` (500) characters and :data:`MAX_DEPTH` (32) levels of nesting in the
  syntax tree;
- an exponent must not contain the variable, and its value must be a real number of magnitude at
  most :data:`MAX_EXPONENT` (12). ``n**2``, ``n**-0.5``, ``n**(1/3)`` and ``2**(3*4)`` are accepted;
  ``2**n``, ``n**n`` and ``9**9**9`` (whose inner ``9**9`` is too large an exponent) are not. For
  growth with the variable in the exponent use ``exp(...)``;
- every sub-expression free of the variable is a constant; it is computed on the spot and must be
  a finite real number of magnitude at most 1e300 (so ``log(-1)``, ``1/0``, ``sqrt(-4)`` and
  ``exp(1000)`` are rejected where they stand). Constants are computed with Python floats and
  :mod:`math`, operand by operand; a sub-expression in which sympy cancels the variable (``n - n``,
  ``0*n``) becomes a constant too, its value taken from sympy, so ``1/(n - n)`` is a division by
  zero. A sub-expression that sympy proves non-real for every real value of the variable
  (``sqrt(-max(n, 1))``) is rejected too. Together these limits bound the work and memory of
  any accepted text.

Characters: the text must be printable ASCII without ``#`` (no comments), except that the
Unicode minus sign U+2212 (as pasted from documents) is read as ``-``. Tabs and line breaks count
as spaces. Any other non-ASCII character is rejected at its position (this also
keeps look-alike letters from being folded into names).

Evaluation: :attr:`Formula.function` is made with :func:`sympy.lambdify` for numpy on first use
and kept. It takes any array-like of speeds and returns a float array of the same shape. Points
where the formula has no real value (``sqrt`` or ``log`` of a negative number, division by zero)
give ``nan`` or ``inf`` without a numpy warning; the caller decides what that means.
"""

from __future__ import annotations

import ast
import functools
import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from ..errors import FormulaError, ParameterError

__all__ = ["Formula", "parse_formula", "FUNCTIONS", "MAX_LENGTH", "MAX_DEPTH", "MAX_EXPONENT", "MAX_ARGUMENTS"]

#: Names of the functions a formula may call.
FUNCTIONS = ("sqrt", "exp", "log", "abs", "min", "max", "sin", "cos", "tanh")
#: Longest formula accepted [characters].
MAX_LENGTH = 500
#: Deepest nesting of the syntax tree accepted [levels].
MAX_DEPTH = 32
#: Most arguments of one ``min``/``max`` (also after sympy merges nested ones).
MAX_ARGUMENTS = 6
#: Largest magnitude of an exponent.
MAX_EXPONENT = 12
#: Largest magnitude of a constant sub-expression.
MAX_CONSTANT = 1e300

_UNICODE_MINUS = "\u2212"
_ONE_ARGUMENT = {"sqrt", "exp", "log", "abs", "sin", "cos", "tanh"}
_FLOAT_FUNCTIONS = {"sqrt": math.sqrt, "exp": math.exp, "log": math.log, "abs": abs,
                    "sin": math.sin, "cos": math.cos, "tanh": math.tanh}
_OPERATOR_WORDS = {ast.FloorDiv: "'//' (floor division)", ast.Mod: "'%' (remainder)",
                   ast.MatMult: "'@' (matrix product)", ast.BitXor: "'^' (use ** for powers)",
                   ast.BitAnd: "'&'", ast.BitOr: "'|'", ast.LShift: "'<<'", ast.RShift: "'>>'"}


@dataclass(frozen=True)
class Formula:
    """A parsed formula in one variable.

    Attributes
    ----------
    text : str
        The text as the user typed it.
    variable : str
        Name of the variable.
    expression : sympy.Expr
        The formula as a sympy expression; the variable is a real sympy ``Symbol``.
    """

    text: str
    variable: str
    expression: object

    @cached_property
    def symbol(self):
        """The sympy symbol of the variable."""
        import sympy

        return sympy.Symbol(self.variable, real=True)

    @cached_property
    def function(self):
        """Numpy-vectorized callable ``f(x) -> ndarray`` of floats, shaped like ``x``."""
        return _vectorize(self.symbol, self.expression)

    @cached_property
    def derivative(self):
        """Numpy-vectorized callable of the derivative d(expression)/d(variable).

        Notes
        -----
        Made by :func:`sympy.diff`; at the corners of ``abs``, ``min`` and ``max`` it takes the
        mean of the two one-sided values (the step ``Heaviside(x)`` is evaluated as
        ``(1 + sign(x))/2``, which is 1/2 at 0).
        """
        import sympy

        d = sympy.diff(self.expression, self.symbol)
        d = d.replace(sympy.Heaviside, lambda x, *rest: (1 + sympy.sign(x)) / 2)
        return _vectorize(self.symbol, d)

    def __call__(self, x):
        """Evaluate the formula at ``x`` (array-like); returns a float ndarray."""
        return self.function(x)

    def __str__(self):
        return self.text


def _vectorize(symbol, expression):
    import sympy

    # exact integers beyond float64's exact range would print as Python ints numpy cannot take
    big = {a: sympy.Float(a) for a in expression.atoms(sympy.Rational) if abs(a.p) > 2**53 or a.q > 2**53}
    raw = sympy.lambdify(symbol, expression.xreplace(big) if big else expression, modules="numpy")

    def evaluate(x):
        try:
            xa = np.asarray(x, dtype=float)
        except (TypeError, ValueError):
            raise ParameterError("speed", x, "an array of real numbers") from None
        with np.errstate(all="ignore"):
            out = np.asarray(raw(xa))
            if np.iscomplexobj(out):
                out = np.where(out.imag == 0, out.real, np.nan)
            out = np.broadcast_to(out.astype(float), xa.shape).copy()
        return out

    return evaluate


def parse_formula(text, variable="n", allowed_functions=FUNCTIONS):
    """Parse a user formula into a :class:`Formula`, without evaluating the text.

    Parameters
    ----------
    text : str
        The formula, e.g. ``"5 + 0.02*n + 3e-5*n**2"``. [unit of the result as the caller
        defines it]
    variable : str
        Name of the one variable allowed in the text (an ASCII identifier that is not a
        function name).
    allowed_functions : iterable of str
        Subset of :data:`FUNCTIONS` the text may call.

    Returns
    -------
    Formula
        With ``.text``, ``.variable``, ``.expression`` (sympy) and ``.function`` (numpy).

    Raises
    ------
    FormulaError
        The text is not an accepted formula; ``position`` points at the offending character.
    ParameterError
        ``text`` is not a string, or ``variable`` / ``allowed_functions`` are invalid.

    Notes
    -----
    The grammar and limits are listed in the module docstring. Results are cached on
    ``(text, variable, allowed_functions)``; a :class:`Formula` is immutable, so sharing is safe.

    Examples
    --------
    >>> f = parse_formula("10 + 0.5*n**2")
    >>> f.function([0.0, 2.0]).tolist()
    [10.0, 12.0]
    """
    if not isinstance(text, str):
        raise ParameterError("text", text, "a string")
    if not (isinstance(variable, str) and variable.isascii() and variable.isidentifier()
            and variable not in FUNCTIONS and not variable.startswith("_")):
        raise ParameterError("variable", variable,
                             "an ASCII identifier not starting with '_' and not a function name")
    if isinstance(allowed_functions, str):
        allowed_functions = (allowed_functions,)
    try:
        allowed = tuple(sorted(set(allowed_functions)))
    except TypeError:
        raise ParameterError("allowed_functions", allowed_functions, f"names among {FUNCTIONS}") from None
    for name in allowed:
        if name not in FUNCTIONS:
            raise ParameterError("allowed_functions", name, f"one of {FUNCTIONS}")
    return _parse_cached(text, variable, allowed)


@functools.lru_cache(maxsize=256)
def _parse_cached(text, variable, allowed):
    if len(text) > MAX_LENGTH:
        raise FormulaError(f"formula too long: {len(text)} characters, at most {MAX_LENGTH} allowed",
                           text, MAX_LENGTH)
    source = text.replace(_UNICODE_MINUS, "-")
    for i, ch in enumerate(source):
        if ch == "#":
            raise FormulaError("comments ('#') are not allowed in a formula", text, i)
        if not ch.isascii() or not (ch.isprintable() or ch in " \t\r\n"):
            raise FormulaError(f"character {ch!r} is not allowed (use printable ASCII; U+2212 minus is "
                               "read as '-')", text, i)
    if not source.strip():
        raise FormulaError("empty formula", text, 0)
    # one line, same length (so that ast column offsets are text positions), no leading blanks
    source = source.replace("\t", " ").replace("\r", " ").replace("\n", " ")
    shift = len(source) - len(source.lstrip(" "))
    try:
        tree = ast.parse(source[shift:], mode="eval")
    except SyntaxError as exc:
        offset = shift + exc.offset - 1 if exc.offset and exc.offset >= 1 else len(text)
        raise FormulaError(f"syntax error: {exc.msg}", text, min(offset, len(text))) from None
    except (RecursionError, MemoryError, ValueError):
        raise FormulaError("formula too deeply nested or malformed", text, 0) from None
    builder = _Builder(text, variable, set(allowed), shift)
    expression, _ = builder.build(tree.body, 1)
    return Formula(text=text, variable=variable, expression=expression)


class _Builder:
    """Walks the syntax tree and builds (sympy expression, float value or None) pairs.

    The float value is the constant's value when the sub-expression is free of the variable,
    computed with :mod:`math` on floats alone, and ``None`` otherwise.
    """

    def __init__(self, text, variable, allowed, shift=0):
        import sympy

        self.sympy = sympy
        self.text = text
        self.shift = shift
        self.variable = variable
        self.allowed = allowed
        self.symbol = sympy.Symbol(variable, real=True)

    # -- errors -----------------------------------------------------------------------------
    def fail(self, message, node=None, position=None):
        if position is None:
            position = node.col_offset + self.shift if node is not None else 0
        raise FormulaError(message, self.text, max(0, min(position, len(self.text))))

    def after(self, node):
        """Position of the first non-blank character after ``node`` (an operator, '.', '[')."""
        i = node.end_col_offset + self.shift
        while i < len(self.text) and self.text[i] in " \t\r\n)":
            i += 1
        return i

    def constant(self, value, node):
        if not (math.isfinite(value) and abs(value) <= MAX_CONSTANT):
            self.fail(f"constant part has no finite real value of magnitude <= {MAX_CONSTANT:g}", node)
        return value

    # -- tree walk --------------------------------------------------------------------------
    def build(self, node, depth):
        try:
            expr, value = self._build(node, depth)
        except FormulaError:
            raise
        except (ValueError, TypeError, ArithmeticError) as exc:  # sympy refused the combination
            self.fail(f"sub-expression cannot be formed: {exc}", node)
        if value is None and expr.is_extended_real is False:
            self.fail("sub-expression has no real value at any speed", node)
        if value is None and not expr.free_symbols:
            # the variable cancelled (n - n, 0*n): the result is a constant like any other
            try:
                z = complex(expr.evalf())
            except (TypeError, ValueError, OverflowError):
                self.fail("sub-expression has no finite real value", node)
            if z.imag != 0:
                self.fail("sub-expression has no real value", node)
            value = self.constant(z.real, node)
        return expr, value

    def _build(self, node, depth):
        if depth > MAX_DEPTH:
            self.fail(f"formula nested too deeply (more than {MAX_DEPTH} levels)", node)
        sp = self.sympy
        if isinstance(node, ast.Constant):
            value = node.value
            if type(value) is int:
                if abs(value) > MAX_CONSTANT:
                    self.fail("number too large", node)
                return sp.Integer(value), self.constant(float(value), node)
            if type(value) is float:
                self.constant(value, node)
                return sp.Float(value), value
            if type(value) is complex:
                self.fail("complex numbers are not allowed", node)
            self.fail(f"{type(value).__name__} literal {value!r} is not allowed: numbers only", node)
        if isinstance(node, ast.Name):
            if node.id == self.variable:
                return self.symbol, None
            if node.id in FUNCTIONS:
                self.fail(f"function {node.id!r} must be called with parentheses", node)
            self.fail(f"unknown name {node.id!r}: the only variable is {self.variable!r}", node)
        if isinstance(node, ast.UnaryOp):
            if isinstance(node.op, (ast.UAdd, ast.USub)):
                expr, value = self.build(node.operand, depth + 1)
                if isinstance(node.op, ast.UAdd):
                    return expr, value
                return -expr, (None if value is None else -value)
            self.fail("only unary '+' and '-' are allowed", node)
        if isinstance(node, ast.BinOp):
            return self.binop(node, depth)
        if isinstance(node, ast.Call):
            return self.call(node, depth)
        if isinstance(node, ast.Attribute):
            while isinstance(node.value, ast.Attribute):  # point at the first '.' of a chain
                node = node.value
            self.fail("attribute access ('.') is not allowed", node, self.after(node.value))
        if isinstance(node, ast.Subscript):
            self.fail("subscripts ('[...]') are not allowed", node, self.after(node.value))
        if isinstance(node, ast.Compare):
            self.fail("comparisons are not allowed", node, self.after(node.left))
        if isinstance(node, ast.BoolOp):
            self.fail("'and'/'or' are not allowed", node, self.after(node.values[0]))
        if isinstance(node, ast.Lambda):
            self.fail("lambda is not allowed", node)
        if isinstance(node, ast.JoinedStr):
            self.fail("f-strings are not allowed", node)
        if isinstance(node, ast.IfExp):
            self.fail("conditional expressions are not allowed", node, self.after(node.body))
        if isinstance(node, ast.Starred):
            self.fail("starred arguments are not allowed", node)
        self.fail(f"{type(node).__name__} is not allowed in a formula", node)

    def binop(self, node, depth):
        op = type(node.op)
        if op not in (ast.Add, ast.Sub, ast.Mult, ast.Div, ast.Pow):
            word = _OPERATOR_WORDS.get(op, type(node.op).__name__)
            self.fail(f"operator {word} is not allowed", node, self.after(node.left))
        left, lv = self.build(node.left, depth + 1)
        right, rv = self.build(node.right, depth + 1)
        const = lv is not None and rv is not None
        if op is ast.Add:
            return left + right, (self.constant(lv + rv, node) if const else None)
        if op is ast.Sub:
            return left - right, (self.constant(lv - rv, node) if const else None)
        if op is ast.Mult:
            return left * right, (self.constant(lv * rv, node) if const else None)
        if op is ast.Div:
            if rv == 0.0:
                self.fail("division by zero", node, self.after(node.left))
            return left / right, (self.constant(lv / rv, node) if const else None)
        # power
        if rv is None:
            self.fail(f"an exponent must not contain {self.variable!r} (use exp(...))", node.right)
        if abs(rv) > MAX_EXPONENT:
            self.fail(f"exponent {rv:g} too large: magnitude at most {MAX_EXPONENT}", node.right)
        value = None
        if lv is not None:
            if lv == 0.0 and rv < 0:
                self.fail("zero to a negative power", node, self.after(node.left))
            if lv < 0 and rv != int(rv):
                self.fail("negative number to a fractional power has no real value", node,
                          self.after(node.left))
            try:
                value = float(lv) ** rv
            except (OverflowError, ZeroDivisionError):
                self.fail("constant power too large", node)
            self.constant(value, node)
        return left ** right, value

    def call(self, node, depth):
        func = node.func
        if not isinstance(func, ast.Name):
            if isinstance(func, ast.Attribute):
                self.fail("attribute access ('.') is not allowed", func, self.after(func.value))
            self.fail("only the listed functions may be called", func)
        name = func.id
        if name not in FUNCTIONS:
            self.fail(f"unknown function {name!r}; allowed: {', '.join(sorted(self.allowed))}", func)
        if name not in self.allowed:
            self.fail(f"function {name!r} is not allowed here; allowed: {', '.join(sorted(self.allowed))}",
                      func)
        if node.keywords:
            kw = node.keywords[0]
            self.fail("keyword arguments are not allowed", kw)
        for arg in node.args:
            if isinstance(arg, ast.Starred):
                self.fail("starred arguments are not allowed", arg)
        nargs = len(node.args)
        if name in _ONE_ARGUMENT and nargs != 1:
            self.fail(f"{name}() takes exactly one argument, {nargs} given", func)
        if name in ("min", "max") and not 2 <= nargs <= MAX_ARGUMENTS:
            self.fail(f"{name}() takes 2 to {MAX_ARGUMENTS} arguments, {nargs} given", func)
        built = [self.build(arg, depth + 1) for arg in node.args]
        exprs = [e for e, _ in built]
        values = [v for _, v in built]
        const = all(v is not None for v in values)
        sp = self.sympy
        if name in ("min", "max"):
            expr = (sp.Min if name == "min" else sp.Max)(*exprs)
            if isinstance(expr, (sp.Min, sp.Max)) and len(expr.args) > MAX_ARGUMENTS:
                self.fail(f"nested {name}() gathers more than {MAX_ARGUMENTS} arguments", func)
            value = (min(values) if name == "min" else max(values)) if const else None
            return expr, (self.constant(value, node) if const else None)
        (arg,), (v,) = exprs, values
        if v is not None:
            if name == "sqrt" and v < 0:
                self.fail("sqrt of a negative constant has no real value", node)
            if name == "log" and v <= 0:
                self.fail("log of a constant <= 0 has no real value", node)
            try:
                value = _FLOAT_FUNCTIONS[name](v)
            except OverflowError:
                self.fail(f"{name}() of this constant is too large", node)
            self.constant(value, node)
        else:
            value = None
        sp_func = {"sqrt": sp.sqrt, "exp": sp.exp, "log": sp.log, "abs": sp.Abs,
                   "sin": sp.sin, "cos": sp.cos, "tanh": sp.tanh}[name]
        return sp_func(arg), value
