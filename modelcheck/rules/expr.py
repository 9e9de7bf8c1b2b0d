"""Safe, vectorised, unit-aware expressions of rule files.

An expression is a line of arithmetic an engineer would write in a calculation::

    P / A                                   axial stress
    Fy / Omega                              allowable stress
    0.658 ** (Fy / Fe) * Fy if KLr <= 4.71 * sqrt(E / Fy) else 0.877 * Fe
    min(L / 500, 6 [mm])                    a number with a unit in square brackets
    known(An) and P > 0                     a condition

It is parsed with Python's :mod:`ast` (``mode="eval"``) and walked over a whitelist: numbers,
text in quotes, names, ``+ - * / **``, comparisons (``< <= > >= == !=``, ``in (...)``),
``and or not``, ``a if c else b`` and the functions of :data:`FUNCTIONS`. Nothing else:
no attribute access, no subscripts, no keyword arguments, no names with underscores in front.
Every value is an array over all members at once (pint quantities wrapping numpy arrays),
so an expression is evaluated once per check, not once per member.

Units appear only as ``number [unit]`` (``25 [mm]``, ``36 [ksi]``, ``0.5 [in]``,
``6.5e-6 [1/delta_degF]``); a bare name is never a unit, so ``A`` is the member's area and
not an ampere, ``t`` a thickness and not a tonne, ``d`` a diameter and not a day.

Conditions have three values: true, false, and unknown (a comparison with a missing number).
``and``/``or``/``not`` follow that logic (false and unknown = false; true or unknown = true),
``where``/``if`` of an unknown condition is a missing number.

Errors are :class:`ExpressionError` (a :class:`~modelcheck.common.errors.RuleSetError`); the rule-set
loader adds the file, line and check id. Nothing else escapes, whatever the text.
"""

from __future__ import annotations

import ast
import difflib
import math
import re
import warnings
from collections.abc import Callable, Collection, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import pint

from modelcheck.common.errors import RuleSetError
from modelcheck.common.units import Q_, QuantityTextError, parse_unit, ureg

if TYPE_CHECKING:
    from pint.facets.plain import PlainUnit

MAX_LENGTH = 2000          # characters of one expression
MAX_DEPTH = 32             # nesting depth of the syntax tree
MAX_NODES = 600            # nodes of the syntax tree
MAX_EXPONENT = 10.0        # |n| of a power of a quantity with units, and of any literal exponent
MAX_TEXT = 200             # characters of a text literal
MAX_UNIT_TEXT = 40         # characters inside [ ]

#: functions an expression may call: name -> (min args, max args, one-line description)
FUNCTIONS: Mapping[str, tuple[int, int, str]] = MappingProxyType({
    "sqrt": (1, 1, "square root; units follow (sqrt of m² is m)"),
    "abs": (1, 1, "absolute value"),
    "min": (2, 16, "smallest of the arguments, member by member (same dimension)"),
    "max": (2, 16, "largest of the arguments, member by member (same dimension)"),
    "exp": (1, 1, "e to the power of a plain number"),
    "log": (1, 1, "natural logarithm of a plain number"),
    "log10": (1, 1, "base-10 logarithm of a plain number"),
    "where": (3, 3, "where(condition, value if true, value if false)"),
    "case": (3, 31, "case(cond1, value1, cond2, value2, ..., otherwise): first true condition wins"),
    "known": (1, 1, "known(name): true where the member has that value (not missing)"),
    "matches": (2, 2, "matches(text, 'pattern'): shell-style pattern (* ? [abc]), any case"),
})

#: constant names
CONSTANTS: Mapping[str, float] = MappingProxyType({"pi": math.pi})

_NAME_RE = re.compile(r"[A-Za-z][A-Za-z0-9_]*\Z")
_PLACEHOLDER_RE = re.compile(r"_u\d+\Z")
_NUMBER_BEFORE_RE = re.compile(r"(?<![\w.])((?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*\Z")
_UNIT_CHARS_RE = re.compile(r"[A-Za-z0-9_ */.^()°µΩ²³·-]*\Z")


class ExpressionError(RuleSetError):
    """An expression that cannot be parsed, is not allowed, or mixes dimensions."""


# ---------------------------------------------------------------------------------------------
# values


@dataclass(frozen=True)
class Cond:
    """A three-valued condition over members: ``value`` where ``known``, unknown elsewhere."""

    value: Any   # bool ndarray or numpy bool scalar
    known: Any   # bool ndarray or numpy bool scalar


@dataclass(frozen=True)
class Text:
    """Text over members (object ndarray of str or None) or one text constant (str)."""

    values: Any


@dataclass(frozen=True)
class Choices:
    """The parenthesised list on the right of ``in``."""

    items: tuple[str, ...]


Value = pint.Quantity | Cond | Text | Choices


def describe(value: Value) -> str:
    """What kind of value this is, in an engineer's words ('a stress', 'a condition')."""
    if isinstance(value, Cond):
        return "a condition"
    if isinstance(value, Text):
        return "text"
    if isinstance(value, Choices):
        return "a list"
    word = dimension_word(value)
    return ("an " if word[0] in "aeiou" else "a ") + word


_DIMENSION_WORDS: tuple[tuple[str, str], ...] = (
    ("", "plain number"),
    ("N", "force"),
    ("Pa", "stress"),
    ("m", "length"),
    ("m**2", "area"),
    ("m**3", "volume"),
    ("m**4", "second moment of area"),
    ("1/K", "expansion coefficient"),
    ("K", "temperature change"),
    ("N/m", "force per length"),
    ("N*m", "moment"),
    ("kg", "mass"),
)


def dimension_word(q: pint.Quantity | pint.Unit) -> str:
    dim = q.dimensionality
    for unit, word in _DIMENSION_WORDS:
        if ureg.Unit(unit).dimensionality == dim:
            return word
    return f"quantity of dimension {dim}"


# ---------------------------------------------------------------------------------------------
# parsing


@dataclass(frozen=True)
class Expression:
    """A parsed, whitelisted expression. ``names`` are the free names it refers to."""

    source: str
    tree: ast.Expression = field(repr=False, compare=False)
    names: frozenset[str]
    known_names: frozenset[str]                      # names appearing as known(NAME)
    literals: Mapping[str, pint.Quantity] = field(repr=False, compare=False)

    def __str__(self) -> str:
        return self.source

    def evaluate(self, lookup: Callable[[str], Value]) -> Value:
        """The value of the expression; ``lookup(name)`` gives each free name's value."""
        try:
            with np.errstate(all="ignore"):
                return _Evaluator(lookup, self.literals).eval(self.tree.body)
        except ExpressionError:
            raise
        except pint.DimensionalityError as exc:
            raise ExpressionError(f"{self.source!r}: dimensions do not match ({exc})") from exc
        except (pint.PintError, TypeError, ValueError, ArithmeticError, AttributeError,
                IndexError, KeyError, AssertionError) as exc:
            raise ExpressionError(f"{self.source!r} cannot be evaluated: {exc}") from exc
        except (RecursionError, MemoryError) as exc:
            raise ExpressionError(f"{self.source!r} is too complex to evaluate") from exc


def unit_literal(number: str, unit_text: str) -> pint.Quantity:
    """``25``, ``mm`` -> Q_(25.0, 'mm'), refusing odd text, offset temperatures, huge powers."""
    unit_text = unit_text.strip()
    if not unit_text:
        raise ExpressionError(f"empty unit in '{number} []'")
    if len(unit_text) > MAX_UNIT_TEXT or not _UNIT_CHARS_RE.match(unit_text) or "__" in unit_text:
        raise ExpressionError(f"'[{unit_text}]' is not a unit")
    try:
        unit = parse_unit(unit_text)
    except QuantityTextError as exc:
        why = "divides by zero" if "divides by zero" in str(exc) else "is not a unit pint knows"
        raise ExpressionError(f"'[{unit_text}]' {why}") from None
    return checked_quantity(float(number), unit, f"{number} [{unit_text}]")


def checked_quantity(magnitude: float, unit: pint.Unit, text: str) -> pint.Quantity:
    """A finite scalar quantity with a multiplicative unit of small powers, or ExpressionError."""
    if not math.isfinite(magnitude):
        raise ExpressionError(f"{text!r} is not a finite number")
    # pint types a unit's powers as objects: they are numbers
    if any(abs(p) > MAX_EXPONENT for p in dict(unit._units).values()):   # type: ignore[operator]
        raise ExpressionError(f"{text!r}: unit powers are limited to ±{MAX_EXPONENT:g}")
    q = Q_(np.float64(magnitude), unit)
    if not q._is_multiplicative:
        raise ExpressionError(
            f"{text!r}: a temperature with an offset (degC, degF) is ambiguous here; "
            "write a temperature change as delta_degC, delta_degF or K"
        )
    # Python floats: an overflow is inf, not a warning ('1e308 [mi]' is finite only as written)
    if not math.isfinite(magnitude * float(Q_(1.0, unit).to_base_units().magnitude)):
        raise ExpressionError(f"{text!r}: too large: it overflows when converted to SI units")
    return q


def _replace_unit_literals(text: str) -> tuple[str, dict[str, pint.Quantity]]:
    """Turn every ``number [unit]`` into a placeholder name; skip text in quotes and comments."""
    out: list[str] = []
    literals: dict[str, pint.Quantity] = {}
    i, n = 0, len(text)
    while i < n:
        ch = text[i]
        if ch in "'\"":
            j = i + 1
            while j < n and text[j] != ch:
                j += 2 if text[j] == "\\" else 1
            out.append(text[i:j + 1])
            i = j + 1
        elif ch == "#":
            j = text.find("\n", i)
            j = n if j < 0 else j
            out.append(text[i:j])
            i = j
        elif ch == "[":
            j = text.find("]", i)
            if j < 0:
                raise ExpressionError("'[' without a closing ']'")
            before = "".join(out)
            m = _NUMBER_BEFORE_RE.search(before)
            if m is None:
                raise ExpressionError(
                    f"'[{text[i + 1:j]}]': square brackets hold a unit and must follow a number, "
                    "as in 25 [mm] (to give a list, use parentheses)"
                )
            name = f"_u{len(literals)}"
            literals[name] = unit_literal(m.group(1), text[i + 1:j])
            out = [before[:m.start()], name]
            i = j + 1
        elif ch == "]":
            raise ExpressionError("']' without an opening '['")
        elif ch == "_" and (i == 0 or not (text[i - 1].isalnum() or text[i - 1] in "_.")):
            m = re.match(r"\w*", text[i:])
            raise ExpressionError(f"{m.group(0) if m else '_'!r} is not an allowed name (names start with a letter)")
        else:
            out.append(ch)
            i += 1
    return "".join(out), literals


_BINOPS = (ast.Add, ast.Sub, ast.Mult, ast.Div, ast.Pow)
_CMPOPS = (ast.Lt, ast.LtE, ast.Gt, ast.GtE, ast.Eq, ast.NotEq, ast.In, ast.NotIn)
_OP_TEXT = {ast.Mod: "%", ast.FloorDiv: "//", ast.MatMult: "@", ast.BitAnd: "&", ast.BitOr: "|",
            ast.BitXor: "^ (for a power write **)", ast.LShift: "<<", ast.RShift: ">>",
            ast.Invert: "~", ast.Is: "is", ast.IsNot: "is not"}


def _literal_number(node: ast.AST) -> float | None:
    """The value of ``3``, ``-3``, ``+2.5``; None for anything else."""
    sign = 1.0
    while isinstance(node, ast.UnaryOp) and isinstance(node.op, (ast.USub, ast.UAdd)):
        sign = -sign if isinstance(node.op, ast.USub) else sign
        node = node.operand
    if isinstance(node, ast.Constant) and isinstance(node.value, int | float) and not isinstance(node.value, bool):
        return sign * float(node.value)
    return None


def _check_tree(tree: ast.Expression) -> tuple[set[str], set[str]]:
    """Whitelist walk; returns (free names, names inside known())."""
    names: set[str] = set()
    known: set[str] = set()
    count = 0
    stack: list[tuple[ast.AST, int, ast.AST | None]] = [(tree.body, 1, None)]
    while stack:
        node, depth, parent = stack.pop()
        count += 1
        if depth > MAX_DEPTH:
            raise ExpressionError(f"nested more than {MAX_DEPTH} levels deep")
        if count > MAX_NODES:
            raise ExpressionError(f"longer than {MAX_NODES} terms")
        children: list[ast.AST] = []
        if isinstance(node, ast.Constant):
            v = node.value
            if type(v) is bool:
                pass
            elif isinstance(v, int | float):
                if not math.isfinite(float(v)):
                    raise ExpressionError(f"{v!r} is not a finite number")
            elif type(v) is str:
                if len(v) > MAX_TEXT:
                    raise ExpressionError(f"text longer than {MAX_TEXT} characters")
            else:
                raise ExpressionError(f"{v!r} is not a number or a text")
        elif isinstance(node, ast.Name):
            if not isinstance(node.ctx, ast.Load):
                raise ExpressionError(f"cannot assign to {node.id!r}")
            if _PLACEHOLDER_RE.match(node.id):
                pass
            elif not _NAME_RE.match(node.id):
                raise ExpressionError(f"{node.id!r} is not an allowed name (names start with a letter)")
            elif node.id in FUNCTIONS:
                raise ExpressionError(f"{node.id!r} is a function: call it as {node.id}(...)")
            elif node.id not in CONSTANTS:
                names.add(node.id)
        elif isinstance(node, ast.BinOp):
            if not isinstance(node.op, _BINOPS):
                raise ExpressionError(f"operator {_OP_TEXT.get(type(node.op), type(node.op).__name__)} is not allowed")
            if isinstance(node.op, ast.Pow):
                lit = _literal_number(node.right)
                if lit is not None and abs(lit) > MAX_EXPONENT:
                    raise ExpressionError(f"exponent {lit:g} is larger than {MAX_EXPONENT:g}")
            children = [node.left, node.right]
        elif isinstance(node, ast.UnaryOp):
            if not isinstance(node.op, (ast.UAdd, ast.USub, ast.Not)):
                raise ExpressionError(f"operator {_OP_TEXT.get(type(node.op), '?')} is not allowed")
            children = [node.operand]
        elif isinstance(node, ast.BoolOp):
            children = list(node.values)
        elif isinstance(node, ast.Compare):
            for op, right in zip(node.ops, node.comparators, strict=True):
                if not isinstance(op, _CMPOPS):
                    raise ExpressionError(f"comparison {_OP_TEXT.get(type(op), '?')} is not allowed")
                if isinstance(op, (ast.In, ast.NotIn)):
                    if not isinstance(right, (ast.Tuple, ast.List)):
                        raise ExpressionError("'in' takes a list in parentheses: shape in ('I', 'H')")
                    for item in right.elts:
                        if not (isinstance(item, ast.Constant) and type(item.value) is str):
                            raise ExpressionError("the list after 'in' holds texts in quotes only")
                        if len(item.value) > MAX_TEXT:
                            raise ExpressionError(f"text longer than {MAX_TEXT} characters")
                    if len(right.elts) > 64:
                        raise ExpressionError("the list after 'in' holds at most 64 texts")
                elif isinstance(right, (ast.Tuple, ast.List)):
                    raise ExpressionError("a list is only allowed after 'in'")
                else:
                    children.append(right)
            if isinstance(node.left, (ast.Tuple, ast.List)):
                raise ExpressionError("a list is only allowed after 'in'")
            children.append(node.left)
        elif isinstance(node, ast.IfExp):
            children = [node.test, node.body, node.orelse]
        elif isinstance(node, ast.Call):
            func = node.func
            if not isinstance(func, ast.Name):
                raise ExpressionError("only the listed functions can be called: " + ", ".join(FUNCTIONS))
            if func.id not in FUNCTIONS:
                hint = difflib.get_close_matches(func.id, list(FUNCTIONS), n=1)
                raise ExpressionError(
                    f"unknown function {func.id!r}"
                    + (f" (did you mean {hint[0]!r}?)" if hint else "")
                    + "; functions: " + ", ".join(FUNCTIONS)
                )
            if node.keywords or any(isinstance(a, ast.Starred) for a in node.args):
                raise ExpressionError(f"{func.id}(): keyword and * arguments are not allowed")
            lo, hi, _ = FUNCTIONS[func.id]
            if not lo <= len(node.args) <= hi:
                want = str(lo) if lo == hi else f"{lo} to {hi}"
                raise ExpressionError(f"{func.id}() takes {want} arguments, not {len(node.args)}")
            if func.id == "case" and len(node.args) % 2 == 0:
                raise ExpressionError("case() takes pairs of (condition, value) and a last 'otherwise' value")
            if func.id == "known":
                arg = node.args[0]
                if not (isinstance(arg, ast.Name) and _NAME_RE.match(arg.id)
                        and arg.id not in CONSTANTS and arg.id not in FUNCTIONS):
                    raise ExpressionError("known() takes one name, as in known(An)")
                known.add(arg.id)
            if func.id == "matches":
                pat = node.args[1]
                if not (isinstance(pat, ast.Constant) and type(pat.value) is str):
                    raise ExpressionError("matches(text, 'pattern'): the pattern is a text in quotes")
            children = list(node.args)
        elif isinstance(node, ast.Attribute):
            raise ExpressionError("attribute access (a.b) is not allowed")
        elif isinstance(node, ast.Subscript):
            raise ExpressionError("subscripts (a[...]) are not allowed; a unit in [ ] follows a number")
        elif isinstance(node, (ast.Tuple, ast.List)):
            raise ExpressionError("a list is only allowed after 'in'")
        elif isinstance(node, ast.Lambda):
            raise ExpressionError("lambda is not allowed")
        elif isinstance(node, ast.NamedExpr):
            raise ExpressionError("assignment (:=) is not allowed")
        else:
            raise ExpressionError(f"{type(node).__name__} is not allowed in a rule expression")
        for child in children:
            stack.append((child, depth + 1, node))
    return names, known


def _quoted(source: str, limit: int = 80) -> str:
    """An expression quoted in an error message: on one line, long ones shortened."""
    flat = " ".join(source.split())
    return repr(flat if len(flat) <= limit else flat[: limit - 1] + "…")


def parse_expression(text: str, known_names: Collection[str] | None = None) -> Expression:
    """Parse and whitelist ``text``; with ``known_names``, every free name must be one of them.

    >>> parse_expression("Fy / Omega").names == {"Fy", "Omega"}
    True
    """
    if not isinstance(text, str):
        raise ExpressionError(f"an expression is a text in quotes, not {type(text).__name__}")
    if len(text) > MAX_LENGTH:
        raise ExpressionError(f"expression longer than {MAX_LENGTH} characters")
    if not text.strip():
        raise ExpressionError("empty expression")
    if "\x00" in text:
        raise ExpressionError("expression contains a NUL character")
    source = " ".join(text.split()) if "#" not in text else text.strip()
    processed, literals = _replace_unit_literals(text)
    try:
        # parentheses let an expression run over several lines of a multi-line TOML string
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")   # e.g. invalid escape sequences in a text
            tree = ast.parse("(" + processed.strip() + "\n)", mode="eval")
    except SyntaxError as exc:
        hint = rule_language_hint(source, known_names)
        if hint is not None:
            raise ExpressionError(f"{_quoted(source)} is not a valid expression: {hint}") from None
        raise ExpressionError(f"{_quoted(source)} is not a valid expression: {exc.msg}") from None
    except (ValueError, RecursionError, MemoryError, OverflowError) as exc:
        raise ExpressionError(f"{_quoted(source)} cannot be parsed: {type(exc).__name__}") from None
    names, known = _check_tree(tree)
    if known_names is not None:
        unknown = sorted(names - set(known_names))
        if unknown:
            raise ExpressionError(unknown_name_message(unknown[0], known_names))
    return Expression(source=source, tree=tree, names=frozenset(names), known_names=frozenset(known),
                      literals=MappingProxyType(literals))


_TEXT_RE = re.compile(r"'[^']*'|\"[^\"]*\"")
_BRACKET_RE = re.compile(r"\[[^\]]*\]")
#: a number (or a bracketed unit) written straight before a name: '0.33 Fu', '3 mm', '2Fu'
_JUXTAPOSED_RE = re.compile(r"(?<![\w.])((?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?(?:\s*\[[^\]]*\])?)\s*([A-Za-z_]\w*)")
_KEYWORDS = frozenset({"and", "or", "not", "if", "else", "in", "is"})
#: a single '=' (not part of ==, <=, >=, !=), with what stands either side
_ASSIGN_RE = re.compile(r"([\w.]+)\s*(?<![=<>!])=(?!=)\s*('[^']*'|\"[^\"]*\"|[^\s)]+)?")


def rule_language_hint(source: str, known_names: Collection[str] | None = None) -> str | None:
    """What an engineer most likely meant by an expression that does not parse, in the rule
    language's own words; None when nothing familiar is found.

    >>> rule_language_hint("0.33 Fu", {"Fu"})
    'write a product with `*`: `0.33 * Fu`'
    >>> rule_language_hint("3 mm")
    'a number with a unit takes brackets: `3 [mm]`'
    """
    # quoted texts are blanked (same length), so nothing inside them is taken for code
    masked = _TEXT_RE.sub(lambda m: m.group(0)[0] + " " * (len(m.group(0)) - 2) + m.group(0)[-1], source)
    assign = _ASSIGN_RE.search(masked)
    if assign is not None:
        left = assign.group(1)
        right = source[assign.start(2):assign.end(2)] if assign.group(2) else "..."
        if right[:1] in ("'", '"'):
            return (f"compare with `==`: `{left} == {right}`, or match a pattern with "
                    f"`matches({left}, {right})`")
        return f"compare with `==`: `{left} == {right}`"
    if "&&" in masked or "||" in masked:
        return "write `and` and `or` for && and ||"
    unmasked = _BRACKET_RE.sub(lambda m: "[" + " " * (len(m.group(0)) - 2) + "]", masked)
    for m in _JUXTAPOSED_RE.finditer(unmasked):
        number = source[m.start(1):m.end(1)]
        name = m.group(2)
        if name in _KEYWORDS:
            continue
        if (known_names is None or name not in known_names) and "[" not in number and _is_unit(name):
            return f"a number with a unit takes brackets: `{number} [{name}]`"
        return f"write a product with `*`: `{number} * {name}`"
    return None


def _is_unit(text: str) -> bool:
    try:
        parse_unit(text)
    except QuantityTextError:
        return False
    return True


def unknown_name_message(name: str, known_names: Collection[str]) -> str:
    hint = difflib.get_close_matches(name, list(known_names), n=1, cutoff=0.6)
    return f"unknown name {name!r}" + (f" (did you mean {hint[0]!r}?)" if hint else "")


# ---------------------------------------------------------------------------------------------
# evaluation


def _number(value: Value, what: str) -> pint.Quantity:
    if isinstance(value, pint.Quantity):
        return value
    raise ExpressionError(f"{what} needs a number, but got {describe(value)}")


def _cond(value: Value, what: str) -> Cond:
    if isinstance(value, Cond):
        return value
    raise ExpressionError(f"{what} needs a condition (a comparison), but got {describe(value)}")


def _is_zero_constant(q: pint.Quantity) -> bool:
    return q.dimensionless and np.ndim(q.magnitude) == 0 and float(q.magnitude) == 0.0


def _same_dimension(a: pint.Quantity, b: pint.Quantity, what: str) -> tuple[Any, Any, PlainUnit]:
    """Magnitudes of a and b in a's unit; a plain constant 0 takes the other's unit."""
    if _is_zero_constant(a) and not b.dimensionless:
        return np.zeros_like(b.magnitude, dtype=float) if np.ndim(b.magnitude) else 0.0, b.magnitude, b.units
    if _is_zero_constant(b):
        return a.magnitude, 0.0, a.units
    if a.dimensionality != b.dimensionality:
        raise ExpressionError(
            f"{what}: {describe(a)} and {describe(b)} have different dimensions "
            f"({a.units:~} vs {b.units:~})"
        )
    return a.magnitude, b.to(a.units).magnitude, a.units


def _float_array(x: Any) -> Any:
    return np.asarray(x, dtype=float) if np.ndim(x) else np.float64(x)


def _and(a: Cond, b: Cond) -> Cond:
    false = (a.known & ~a.value) | (b.known & ~b.value)
    known = false | (a.known & b.known)
    return Cond(value=~false & known, known=known)


def _or(a: Cond, b: Cond) -> Cond:
    true = (a.known & a.value) | (b.known & b.value)
    known = true | (a.known & b.known)
    return Cond(value=true, known=known)


def _where(c: Cond, a: Value, b: Value, what: str) -> Value:
    if isinstance(a, pint.Quantity) and isinstance(b, pint.Quantity):
        am, bm, unit = _same_dimension(a, b, what)
        mag = np.where(c.value, am, bm)
        mag = np.where(c.known, mag, np.nan)
        return Q_(_float_array(mag), unit)
    if isinstance(a, Cond) and isinstance(b, Cond):
        value = np.where(c.value, a.value, b.value)
        known = c.known & np.where(c.value, a.known, b.known)
        return Cond(value=value & known, known=known)
    if isinstance(a, Text) and isinstance(b, Text):
        picked = np.where(c.value, np.asarray(a.values, dtype=object), np.asarray(b.values, dtype=object))
        picked = np.where(c.known, picked, None)   # type: ignore[call-overload]  # numpy's hints take no None; numpy does
        return Text(picked if np.ndim(picked) else picked.item())
    raise ExpressionError(f"{what}: both values must be of one kind, not {describe(a)} and {describe(b)}")


class _Evaluator:
    def __init__(self, lookup: Callable[[str], Value], literals: Mapping[str, pint.Quantity]) -> None:
        self.lookup = lookup
        self.literals = literals

    def eval(self, node: ast.AST) -> Value:
        method = getattr(self, "_" + type(node).__name__, None)
        if method is None:
            raise ExpressionError(f"{type(node).__name__} is not allowed in a rule expression")
        return method(node)

    def _Constant(self, node: ast.Constant) -> Value:
        v = node.value
        if type(v) is bool:
            return Cond(np.bool_(v), np.bool_(True))
        if isinstance(v, int | float):
            return Q_(np.float64(v), "")
        if type(v) is str:
            return Text(v)
        raise ExpressionError(f"{v!r} is not a number or a text")

    def _Name(self, node: ast.Name) -> Value:
        if node.id in self.literals:
            return self.literals[node.id]
        if node.id in CONSTANTS:
            return Q_(np.float64(CONSTANTS[node.id]), "")
        return self.lookup(node.id)

    def _UnaryOp(self, node: ast.UnaryOp) -> Value:
        v = self.eval(node.operand)
        if isinstance(node.op, ast.Not):
            c = _cond(v, "'not'")
            return Cond(value=~c.value & c.known, known=c.known)
        q = _number(v, "a sign")
        return -q if isinstance(node.op, ast.USub) else q   # type: ignore[return-value]  # pint types a registry's quantities as its plain class

    def _BinOp(self, node: ast.BinOp) -> Value:
        symbol = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.Pow: "**"}[type(node.op)]
        a = _number(self.eval(node.left), f"'{symbol}'")
        b = _number(self.eval(node.right), f"'{symbol}'")
        if isinstance(node.op, (ast.Add, ast.Sub)):
            am, bm, unit = _same_dimension(a, b, f"'{symbol}'")
            return Q_(am + bm if isinstance(node.op, ast.Add) else am - bm, unit)
        if isinstance(node.op, ast.Mult):
            return a * b
        if isinstance(node.op, ast.Div):
            return a / b
        return self._power(a, b)

    @staticmethod
    def _power(a: pint.Quantity, b: pint.Quantity) -> pint.Quantity:
        if not b.dimensionless:
            raise ExpressionError(f"an exponent must be a plain number, not {describe(b)}")
        e = b.m_as("")
        if a.dimensionless:
            return Q_(np.power(_float_array(a.m_as("")), _float_array(e)), "")
        if np.ndim(e) != 0:
            raise ExpressionError(
                f"the power of {describe(a)} must be a fixed number, not one that varies by member"
            )
        e = float(e)
        if not math.isfinite(e) or abs(e) > MAX_EXPONENT:
            raise ExpressionError(f"exponent {e:g} of {describe(a)} is larger than {MAX_EXPONENT:g}")
        return Q_(_float_array(a.magnitude) ** e, a.units**e)

    def _BoolOp(self, node: ast.BoolOp) -> Value:
        word = "and" if isinstance(node.op, ast.And) else "or"
        conds = [_cond(self.eval(v), f"'{word}'") for v in node.values]
        result = conds[0]
        for c in conds[1:]:
            result = _and(result, c) if word == "and" else _or(result, c)
        return result

    def _Compare(self, node: ast.Compare) -> Value:
        left = self.eval(node.left)
        result: Cond | None = None
        for op, right_node in zip(node.ops, node.comparators, strict=True):
            if isinstance(op, (ast.In, ast.NotIn)):
                items = tuple(str(e.value) for e in right_node.elts)  # type: ignore[attr-defined]
                right: Value = Choices(items)
                c = self._membership(left, items, negate=isinstance(op, ast.NotIn))
            else:
                right = self.eval(right_node)
                c = self._compare(left, op, right)
            result = c if result is None else _and(result, c)
            left = right
        assert result is not None
        return result

    @staticmethod
    def _membership(left: Value, items: tuple[str, ...], negate: bool) -> Cond:
        if not isinstance(left, Text):
            raise ExpressionError(f"'in' tests text against a list of texts, not {describe(left)}")
        vals = left.values
        hit: np.ndarray | np.bool_
        if np.ndim(vals):
            hit = np.isin(np.asarray(vals, dtype=object), np.asarray(items, dtype=object))
        else:
            hit = np.bool_(vals in items)
        hit = ~hit if negate else hit
        return Cond(value=hit, known=np.ones_like(hit, dtype=bool) if np.ndim(hit) else np.bool_(True))

    @staticmethod
    def _compare(a: Value, op: ast.cmpop, b: Value) -> Cond:
        sym = {ast.Lt: "<", ast.LtE: "<=", ast.Gt: ">", ast.GtE: ">=", ast.Eq: "==", ast.NotEq: "!="}[type(op)]
        if isinstance(a, Text) and isinstance(b, Text):
            if sym not in ("==", "!="):
                raise ExpressionError(f"texts can be compared with == and != only, not {sym}")
            same = np.asarray(np.asarray(a.values, dtype=object) == np.asarray(b.values, dtype=object), dtype=bool)
            eq: np.ndarray | np.bool_ = same if same.ndim else np.bool_(same[()])
            value = eq if sym == "==" else ~eq
            return Cond(value=value, known=np.ones_like(value, dtype=bool) if np.ndim(value) else np.bool_(True))
        if not (isinstance(a, pint.Quantity) and isinstance(b, pint.Quantity)):
            raise ExpressionError(f"cannot compare {describe(a)} with {describe(b)} ({sym})")
        am, bm, _ = _same_dimension(a, b, f"'{sym}'")
        am, bm = _float_array(am), _float_array(bm)
        fn = {"<": np.less, "<=": np.less_equal, ">": np.greater, ">=": np.greater_equal,
              "==": np.equal, "!=": np.not_equal}[sym]
        known = ~np.isnan(am) & ~np.isnan(bm)
        return Cond(value=fn(am, bm) & known, known=known)

    def _IfExp(self, node: ast.IfExp) -> Value:
        c = _cond(self.eval(node.test), "'if'")
        return _where(c, self.eval(node.body), self.eval(node.orelse), "'if ... else'")

    def _Call(self, node: ast.Call) -> Value:
        name = node.func.id  # type: ignore[attr-defined]  # checked at parse time
        if name == "known":
            v = self.eval(node.args[0])
            if isinstance(v, pint.Quantity):
                k = ~np.isnan(_float_array(v.magnitude))
            elif isinstance(v, Text):
                k = np.asarray(np.vectorize(lambda s: s is not None, otypes=[bool])(v.values)) \
                    if np.ndim(v.values) else np.bool_(v.values is not None)
            elif isinstance(v, Cond):
                k = v.known
            else:
                raise ExpressionError(f"known() takes a name, not {describe(v)}")
            return Cond(value=k, known=np.ones_like(k, dtype=bool) if np.ndim(k) else np.bool_(True))
        if name == "matches":
            text = self.eval(node.args[0])
            if not isinstance(text, Text):
                raise ExpressionError(f"matches() tests text, not {describe(text)}")
            pattern = str(node.args[1].value)  # type: ignore[attr-defined]
            return glob_match(text.values, (pattern,))
        args = [self.eval(a) for a in node.args]
        if name == "where":
            return _where(_cond(args[0], "where()"), args[1], args[2], "where()")
        if name == "case":
            result = args[-1]
            for i in range(len(args) - 3, -1, -2):
                result = _where(_cond(args[i], "case()"), args[i + 1], result, "case()")
            return result
        nums = [_number(a, f"{name}()") for a in args]
        if name in ("min", "max"):
            fn = np.minimum if name == "min" else np.maximum
            acc = nums[0]
            for other in nums[1:]:
                am, bm, unit = _same_dimension(acc, other, f"{name}()")
                acc = Q_(_float_array(fn(am, bm)), unit)
            return acc
        x = nums[0]
        if name == "sqrt":
            return Q_(np.sqrt(_float_array(x.magnitude)), x.units**0.5)
        if name == "abs":
            return Q_(np.abs(_float_array(x.magnitude)), x.units)
        if not x.dimensionless:
            raise ExpressionError(f"{name}() takes a plain number, not {describe(x)}")
        m = _float_array(x.m_as(""))
        fn1 = {"exp": np.exp, "log": np.log, "log10": np.log10}[name]
        return Q_(_float_array(fn1(m)), "")


def glob_match(values: Any, patterns: tuple[str, ...]) -> Cond:
    """Shell-style, case-insensitive match of text values (None never matches); always known."""
    import fnmatch

    regex = re.compile("|".join(f"(?:{fnmatch.translate(p)})" for p in patterns), re.IGNORECASE | re.DOTALL)
    if not np.ndim(values):
        one = np.bool_(values is not None and regex.match(str(values)) is not None)
        return Cond(value=one, known=np.bool_(True))
    arr = np.asarray(values, dtype=object)
    # each distinct value matched once; a missing one (code -1) takes the False appended last
    codes, uniq = pd.factorize(arr.ravel(), use_na_sentinel=True)
    hit = np.fromiter((regex.match(str(v)) is not None for v in uniq.tolist()), dtype=bool, count=len(uniq))
    value = np.append(hit, False)[codes].reshape(arr.shape)
    return Cond(value=value, known=np.ones(arr.shape, dtype=bool))
