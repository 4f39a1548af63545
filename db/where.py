"""``--where``: a small filter language over property keys, parsed without ``eval``.

Grammar (case-insensitive keywords)::

    expr    := term ("or" term)*
    term    := factor ("and" factor)*
    factor  := "not" factor | "(" expr ")" | "has" KEY | compare
    compare := KEY OP QUANTITY | ATTR ("=" | "!=") WORD
    OP      := "<" | "<=" | ">" | ">=" | "=" | "==" | "!="
    ATTR    := "family" | "response" | "origin"

A quantity is a number with a unit (``125 degC``, ``400 V/um``, ``1.2 g/cm^3``, ``0.2 W/(m K)``: brackets right
after a ``/`` belong to the unit); dimensionless properties take a bare number. A property is compared by its
reference value (small-signal, nearest 25 °C and 1 kHz); a material without the property fails every comparison
on it (so ``not`` of such a comparison holds).
"""

from __future__ import annotations

import operator
import re
from dataclasses import dataclass

from materials.errors import InputError, UnitError
from materials.properties import FAMILIES, ORIGINS, PROPERTIES, RESPONSES
from materials.units import parse_quantity  # light: pint itself loads only for units outside the common table

_TOKEN = re.compile(r"""
    (?P<ws>\s+)
  | (?P<lp>\() | (?P<rp>\))
  | (?P<op><=|>=|==|!=|=|<|>)
  | (?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)
  | (?P<word>[A-Za-z_°µμ℃Ω%][A-Za-z0-9_°µμ℃Ω%/*^.²³·\-]*)
""", re.VERBOSE)
_KEYWORDS = {"and", "or", "not", "has"}
_OPS = {"<": operator.lt, "<=": operator.le, ">": operator.gt, ">=": operator.ge, "=": operator.eq,
        "==": operator.eq, "!=": operator.ne}
_ATTRS = {"family": FAMILIES, "response": RESPONSES, "origin": ORIGINS}
# Limits that keep parsing and evaluation far from Python's recursion limit: beyond them a filter is an error.
MAX_TOKENS = 400
MAX_DEPTH = 50


@dataclass
class _Tok:
    kind: str
    text: str
    pos: int


def _error(expr: str, pos: int, message: str) -> InputError:
    return InputError(f"--where: {message} at position {pos + 1}: {expr[:pos]}»{expr[pos:]}")


def _tokens(expr: str) -> list[_Tok]:
    out, i = [], 0
    while i < len(expr):
        m = _TOKEN.match(expr, i)
        if not m:
            raise _error(expr, i, f"unexpected character '{expr[i]}'")
        kind = m.lastgroup
        if kind != "ws":
            out.append(_Tok(kind, m.group(), i))
        i = m.end()
    out.append(_Tok("end", "", len(expr)))
    return out


class _Parser:
    def __init__(self, expr: str):
        self.expr = expr
        self.toks = _tokens(expr)
        self.i = 0
        self.depth = 0
        if len(self.toks) > MAX_TOKENS:
            raise _error(expr, self.toks[MAX_TOKENS].pos, f"expression too long (more than {MAX_TOKENS} tokens)")

    def peek(self) -> _Tok:
        return self.toks[self.i]

    def take(self) -> _Tok:
        t = self.toks[self.i]
        self.i += 1
        return t

    def is_kw(self, word: str) -> bool:
        t = self.peek()
        return t.kind == "word" and t.text.lower() == word

    def parse(self):
        if self.peek().kind == "end":
            raise _error(self.expr, 0, "empty expression")
        node = self.expr_()
        t = self.peek()
        if t.kind != "end":
            raise _error(self.expr, t.pos, f"unexpected '{t.text}'")
        return node

    def expr_(self):
        node = self.term()
        while self.is_kw("or"):
            self.take()
            node = ("or", node, self.term())
        return node

    def term(self):
        node = self.factor()
        while self.is_kw("and"):
            self.take()
            node = ("and", node, self.factor())
        return node

    def factor(self):
        t = self.peek()
        self.depth += 1
        try:
            if self.depth > MAX_DEPTH:
                raise _error(self.expr, t.pos, f"expression nested too deeply (more than {MAX_DEPTH} levels)")
            return self._factor(t)
        finally:
            self.depth -= 1

    def _factor(self, t: _Tok):
        if self.is_kw("not"):
            self.take()
            return ("not", self.factor())
        if t.kind == "lp":
            self.take()
            node = self.expr_()
            if self.peek().kind != "rp":
                raise _error(self.expr, self.peek().pos, "expected ')'")
            self.take()
            return node
        if self.is_kw("has"):
            self.take()
            k = self.take()
            if k.kind != "word" or k.text not in PROPERTIES:
                raise _error(self.expr, k.pos, "expected a property key after 'has'")
            return ("has", k.text)
        return self.compare()

    def compare(self):
        k = self.take()
        if k.kind != "word" or k.text.lower() in _KEYWORDS:
            raise _error(self.expr, k.pos, "expected a property key" + (f", not '{k.text}'" if k.text else ""))
        key = k.text
        if key not in PROPERTIES and key not in _ATTRS:
            raise _error(self.expr, k.pos, f"unknown property '{key}'")
        op = self.take()
        if op.kind != "op":
            raise _error(self.expr, op.pos, "expected a comparison (<, <=, >, >=, =, !=)")
        if key in _ATTRS:
            if op.text not in ("=", "==", "!="):
                raise _error(self.expr, op.pos, f"'{key}' compares only with = or !=")
            w = self.take()
            if w.kind != "word" or w.text not in _ATTRS[key]:
                raise _error(self.expr, w.pos, f"{key} is one of {', '.join(_ATTRS[key])}")
            return ("attr", key, op.text, w.text)
        n = self.take()
        if n.kind != "num":
            raise _error(self.expr, n.pos, "expected a number")
        unit_parts = []
        unit_pos = self.peek().pos
        while True:
            t = self.peek()
            if t.kind == "word" and t.text.lower() not in _KEYWORDS:
                unit_parts.append(self.take().text)
            elif t.kind == "lp" and unit_parts and unit_parts[-1].endswith("/"):
                # A bracketed denominator, as in W/(m K): part of the unit, not a group of the filter.
                self.take()
                inner = []
                while self.peek().kind in ("word", "num"):
                    inner.append(self.take().text)
                if self.peek().kind != "rp" or not inner:
                    raise _error(self.expr, self.peek().pos, "expected the unit's denominator and ')'")
                self.take()
                unit_parts[-1] += "(" + " ".join(inner) + ")"
            else:
                break
        si = PROPERTIES[key].si
        try:
            value = parse_quantity(f"{n.text} {' '.join(unit_parts)}".strip(), si=si, name=key)
        except UnitError as exc:
            hint = (f" (add a unit, e.g. '{n.text} {PROPERTIES[key].display_unit}')"
                    if not unit_parts and si != "1" else "")
            raise _error(self.expr, unit_pos if unit_parts else n.pos, str(exc) + hint) from None
        return ("cmp", key, op.text, value)


def parse_where(expr: str):
    """Parse ``expr`` into a small tuple tree; InputError pointing at the offending position."""
    if not isinstance(expr, str):
        raise InputError("--where: expected text")
    return _Parser(expr).parse()


def evaluate(node, values: dict, attrs: dict) -> bool:
    """Evaluate a parsed tree on a material's reference ``values`` (property → SI or None) and ``attrs``."""
    kind = node[0]
    if kind == "or":
        return evaluate(node[1], values, attrs) or evaluate(node[2], values, attrs)
    if kind == "and":
        return evaluate(node[1], values, attrs) and evaluate(node[2], values, attrs)
    if kind == "not":
        return not evaluate(node[1], values, attrs)
    if kind == "has":
        return values.get(node[1]) is not None
    if kind == "attr":
        eq = attrs.get(node[1]) == node[3]
        return eq if node[2] in ("=", "==") else not eq
    _, key, op, value = node
    v = values.get(key)
    if v is None:
        return False
    if op in ("=", "=="):
        return abs(v - value) <= 1e-9 * max(abs(v), abs(value), 1e-300)
    return _OPS[op](v, value)


def _keys(node, out: set) -> set:
    if node[0] in ("or", "and"):
        _keys(node[1], out)
        _keys(node[2], out)
    elif node[0] == "not":
        _keys(node[1], out)
    elif node[0] in ("has", "cmp"):
        out.add(node[1])
    return out


def compile_where(expr: str):
    """A predicate over :class:`materials.records.MaterialData` for the expression."""
    from materials.lookup import reference_value

    tree = parse_where(expr)
    keys = _keys(tree, set())

    def predicate(m) -> bool:
        values = {k: reference_value(m, k) for k in keys}
        return evaluate(tree, values, {"family": m.family, "response": m.response, "origin": m.origin})

    return predicate


def compile_where_values(expr: str):
    """``(keys, predicate)``: the properties the expression reads, and a predicate over their reference values
    (property → SI or None) and the attributes ``family``, ``response``, ``origin`` — for callers that already
    hold the values of many materials (:func:`db.query.summaries`)."""
    tree = parse_where(expr)
    return _keys(tree, set()), lambda values, attrs: evaluate(tree, values, attrs)

