"""Safe arithmetic in scene files: "gap + t/2", "2 * sqrt(r**2 - 4)".

Parsed with the ast module and walked node by node: only numbers, the operators + - * / ** %,
parentheses, names of [params] and a few functions and constants are allowed. Nothing is ever
passed to eval, so a scene file cannot run code.
"""
from __future__ import annotations

import ast
import math
import operator

from trapscape.scene.errors import SceneError
from trapscape.scene.names import did_you_mean

FUNCTIONS = {
    "sqrt": math.sqrt, "sin": math.sin, "cos": math.cos, "tan": math.tan,
    "asin": math.asin, "acos": math.acos, "atan": math.atan, "atan2": math.atan2,
    "radians": math.radians, "degrees": math.degrees, "abs": abs, "min": min, "max": max,
    "hypot": math.hypot,
}
CONSTANTS = {"pi": math.pi}
BINARY = {
    ast.Add: operator.add, ast.Sub: operator.sub, ast.Mult: operator.mul,
    ast.Div: operator.truediv, ast.Pow: operator.pow, ast.Mod: operator.mod,
}
UNARY = {ast.USub: operator.neg, ast.UAdd: operator.pos}
MAX_LENGTH = 500  # characters: a longer expression is almost surely a mistake (and a deep AST)


class _Unknown(Exception):
    def __init__(self, name):
        self.name = name


class _Bad(Exception):
    pass


def _walk(node, names):
    if isinstance(node, ast.Expression):
        return _walk(node.body, names)
    if isinstance(node, ast.Constant):
        if isinstance(node.value, bool) or not isinstance(node.value, (int, float)):
            raise _Bad(f"{node.value!r} is not a number; write numbers without quotes inside "
                       f"an expression")
        return float(node.value)  # floats throughout: 10**10**10 overflows at once, never hangs
    if isinstance(node, ast.BinOp) and type(node.op) in BINARY:
        return BINARY[type(node.op)](_walk(node.left, names), _walk(node.right, names))
    if isinstance(node, ast.UnaryOp) and type(node.op) in UNARY:
        return UNARY[type(node.op)](_walk(node.operand, names))
    if isinstance(node, ast.Name):
        if node.id in names:
            return float(names[node.id])
        if node.id in CONSTANTS:
            return CONSTANTS[node.id]
        raise _Unknown(node.id)
    if isinstance(node, ast.Call) and isinstance(node.func, ast.Name) and not node.keywords:
        if node.func.id not in FUNCTIONS:
            raise _Bad(f"{node.func.id}() is not an allowed function; the allowed ones are "
                       f"{', '.join(sorted(FUNCTIONS))}")
        return float(FUNCTIONS[node.func.id](*[_walk(a, names) for a in node.args]))
    raise _Bad(f"'{ast.unparse(node)}' is not plain arithmetic; use numbers, parameter names, "
               f"+ - * / ** % and parentheses")


def evaluate(text: str, names: dict, where: str, later: tuple = ()) -> float:
    """The value of an arithmetic expression over the given names, or a SceneError.

    `later` lists parameters defined further down the file, for a clearer message.
    """
    source = text.strip()
    if not source:
        raise SceneError(f"{where}: the expression is empty; write a number or an expression "
                         f"such as \"gap + 2\".")
    if len(source) > MAX_LENGTH:
        raise SceneError(f"{where}: the expression is longer than {MAX_LENGTH} characters; "
                         f"split it into [params].")
    try:
        tree = ast.parse(source, mode="eval")
    except (SyntaxError, ValueError, MemoryError, RecursionError):
        raise SceneError(f"{where}: cannot read the expression \"{source}\"; use numbers, "
                         f"parameter names, + - * / ** and parentheses.") from None
    try:
        value = _walk(tree, names)
    except _Unknown as unknown:
        if unknown.name in later:
            raise SceneError(f"{where}: \"{source}\" uses the parameter '{unknown.name}', which "
                             f"is defined further down in [params]; move its line up.") from None
        hint = did_you_mean(unknown.name, list(names) + list(CONSTANTS))
        raise SceneError(f"{where}: \"{source}\" uses the unknown parameter "
                         f"'{unknown.name}'{hint}; define it in [params].") from None
    except _Bad as bad:
        raise SceneError(f"{where}: in \"{source}\", {bad}.") from None
    except ZeroDivisionError:
        raise SceneError(f"{where}: \"{source}\" divides by zero; check the parameters "
                         f"it uses.") from None
    except (OverflowError, ValueError, TypeError, RecursionError, MemoryError) as error:
        raise SceneError(f"{where}: \"{source}\" cannot be computed ({error}); check the "
                         f"parameters it uses.") from None
    if isinstance(value, complex) or not math.isfinite(value):
        raise SceneError(f"{where}: \"{source}\" does not give a finite real number; check "
                         f"the parameters it uses.")
    return value


def evaluate_params(raw: dict, overrides: dict, where: str) -> dict:
    """[params] in file order, each an expression of the ones above; overrides replace values.

    raw: name -> number or expression text; overrides: name -> expression text (from --set).
    """
    for name in overrides:
        if name not in raw:
            hint = did_you_mean(name, raw)
            known = ", ".join(raw) if raw else "none"
            raise SceneError(f"--set {name}=...: the scene has no parameter '{name}'{hint} "
                             f"(its [params]: {known}); check the name.")
    values: dict = {}
    order = list(raw)
    for index, name in enumerate(order):
        if not name.isidentifier() or name in CONSTANTS or name in FUNCTIONS:
            raise SceneError(f"{where}, [params] {name}: a parameter name must be a plain word "
                             f"(letters, digits, _) other than a function or pi; rename it.")
        later = tuple(order[index + 1:])
        if name in overrides:
            values[name] = evaluate(overrides[name], values, f"--set {name}", later)
            continue
        value = raw[name]
        key_where = f"{where}, [params] {name}"
        if isinstance(value, bool) or not isinstance(value, (int, float, str)):
            raise SceneError(f"{key_where}: must be a number or an expression in quotes, got "
                             f"{type_word(value)}; write e.g. {name} = 3.5.")
        if isinstance(value, str):
            values[name] = evaluate(value, values, key_where, later)
        else:
            values[name] = _finite(float(value), key_where)
    return values


def _finite(value: float, where: str) -> float:
    if not math.isfinite(value):
        raise SceneError(f"{where}: {value} is not a finite number; give a real value.")
    return value


def type_word(value) -> str:
    """A plain word for a TOML value's type, for messages."""
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, str):
        return "text"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a table"
    return "a date or time" if hasattr(value, "isoformat") else type(value).__name__
