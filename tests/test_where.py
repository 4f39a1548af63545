"""The ``--where`` filter language: grammar, units, error positions, and that it can only parse or refuse."""

from __future__ import annotations

import builtins
import operator
import re

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from db.where import MAX_DEPTH, compile_where, evaluate, parse_where
from materials.errors import InputError
from materials.properties import PROPERTIES


@pytest.mark.parametrize("expr, tree", [
    ("relative_permittivity > 3", ("cmp", "relative_permittivity", ">", 3.0)),
    ("relative_permittivity>3", ("cmp", "relative_permittivity", ">", 3.0)),
    ("loss_tangent <= 0.001", ("cmp", "loss_tangent", "<=", 0.001)),
    ("loss_tangent < 5 %", ("cmp", "loss_tangent", "<", 0.05)),
    ("weibull_shape == 10", ("cmp", "weibull_shape", "==", 10.0)),
    ("self_healing != 0", ("cmp", "self_healing", "!=", 0.0)),
    ("has density", ("has", "density")),
    ("not has density", ("not", ("has", "density"))),
    ("NOT has density", ("not", ("has", "density"))),
    ("family = ceramic-class-2", ("attr", "family", "=", "ceramic-class-2")),
    ("family != gas", ("attr", "family", "!=", "gas")),
    ("response = nonlinear", ("attr", "response", "=", "nonlinear")),
    ("origin == lab", ("attr", "origin", "==", "lab")),
])
def test_grammar(expr, tree):
    assert parse_where(expr) == tree


def test_and_binds_tighter_than_or_and_parentheses_override():
    a, b, c = "has density", "has loss_tangent", "has weibull_shape"
    A, B, C = ("has", "density"), ("has", "loss_tangent"), ("has", "weibull_shape")
    assert parse_where(f"{a} or {b} and {c}") == ("or", A, ("and", B, C))
    assert parse_where(f"({a} or {b}) and {c}") == ("and", ("or", A, B), C)
    assert parse_where(f"{a} AND {b} Or {c}") == ("or", ("and", A, B), C)
    assert parse_where(f"not {a} and {b}") == ("and", ("not", A), B)
    assert parse_where(f"not ({a} and {b})") == ("not", ("and", A, B))


@pytest.mark.parametrize("expr, key, si_value", [
    ("max_temperature >= 125 degC", "max_temperature", 398.15),
    ("max_temperature >= 125 °C", "max_temperature", 398.15),
    ("max_temperature >= 125°C", "max_temperature", 398.15),
    ("max_temperature >= 398.15 K", "max_temperature", 398.15),
    ("min_temperature <= -55 degC", "min_temperature", 218.15),
    ("breakdown_field > 400 V/um", "breakdown_field", 4e8),
    ("breakdown_field > 400 V/µm", "breakdown_field", 4e8),
    ("breakdown_field>400V/um", "breakdown_field", 4e8),
    ("breakdown_field > 0.4 GV/m", "breakdown_field", 4e8),
    ("breakdown_field > 4e8 V/m", "breakdown_field", 4e8),
    ("density < 1.2 g/cm^3", "density", 1200.0),
    ("density < 1.2 g/cm³", "density", 1200.0),
    ("density < 1200 kg/m**3", "density", 1200.0),
    ("min_thickness < 3 um", "min_thickness", 3e-6),
    ("thermal_conductivity > 0.2 W/m/K", "thermal_conductivity", 0.2),
    ("thermal_conductivity > 0.2 W/(m K)", "thermal_conductivity", 0.2),   # bracketed, as the property's unit
    ("thermal_conductivity > 0.2 W/(m*K)", "thermal_conductivity", 0.2),
    ("thermal_conductivity > 2 mW/(cm K)", "thermal_conductivity", 0.2),
    ("recoverable_energy_density > 5 J/cm^3", "recoverable_energy_density", 5e6),
])
def test_numbers_with_units_become_si(expr, key, si_value):
    node = parse_where(expr)
    assert node[:2] == ("cmp", key)
    assert node[3] == pytest.approx(si_value, rel=1e-12)


def test_a_bracketed_unit_inside_a_group():
    node = parse_where("(thermal_conductivity > 0.2 W/(m K) or density < 1 g/cm^3) and relative_permittivity > 2")
    assert node == ("and", ("or", ("cmp", "thermal_conductivity", ">", pytest.approx(0.2)),
                            ("cmp", "density", "<", pytest.approx(1000.0))),
                    ("cmp", "relative_permittivity", ">", pytest.approx(2.0)))
    with pytest.raises(InputError, match="denominator"):
        parse_where("thermal_conductivity > 0.2 W/(m K")


def test_design_example_parses():
    # The example in DESIGN.md.
    assert parse_where("relative_permittivity > 3 and max_temperature >= 125 degC") == (
        "and", ("cmp", "relative_permittivity", ">", 3.0), ("cmp", "max_temperature", ">=", pytest.approx(398.15)))


def _position(message: str) -> int:
    m = re.search(r"at position (\d+): ", message)
    assert m, message
    return int(m.group(1))


@pytest.mark.parametrize("expr, pos, why", [
    ("", 1, "empty expression"),
    ("foo > 3", 1, "unknown property 'foo'"),
    ("relative_permittivity > 3 and bar < 2", 31, "unknown property 'bar'"),
    ("relative_permittivity >", 24, "expected a number"),
    ("relative_permittivity 3", 23, "expected a comparison"),
    ("relative_permittivity > 3 3", 27, "unexpected '3'"),
    ("(relative_permittivity > 3", 27, "expected '\\)'"),
    ("relative_permittivity > 3)", 26, "unexpected '\\)'"),
    ("breakdown_field > 400", 19, "has no unit"),
    ("breakdown_field > 400 kg", 23, "is not a V/m quantity"),
    ("max_temperature > 125", 19, "add a unit, e.g. '125 degC'"),
    ("family < gas", 8, "compares only with = or !="),
    ("family = plastic", 10, "family is one of"),
    ("has", 4, "expected a property key after 'has'"),
    ("has colour", 5, "expected a property key after 'has'"),
    ("and", 1, "expected a property key, not 'and'"),
    ("relative_permittivity > 3 or", 29, "expected a property key"),
    ("relative_permittivity ~ 3", 23, "unexpected character '~'"),
    ("__import__('os')", 12, "unexpected character"),
])
def test_errors_point_at_the_offending_position(expr, pos, why):
    with pytest.raises(InputError, match=why) as exc:
        parse_where(expr)
    msg = str(exc.value)
    assert msg.startswith("--where: ")
    assert "\n" not in msg
    assert _position(msg) == pos
    # The marker sits at the same place in the echoed expression.
    assert msg.endswith(expr[:pos - 1] + "»" + expr[pos - 1:])


@pytest.mark.parametrize("expr", [
    "__import__('os').system('true')",
    "__import__(\"os\")",
    "exec('x = 1')",
    "eval('1')",
    "open('/etc/passwd')",
    "().__class__.__bases__[0].__subclasses__()",
    "lambda: 0",
    "1 if True else 0",
    "relative_permittivity > 3; import os",
    "relative_permittivity > (1).__class__",
    "relative_permittivity > 3 or __import__('os')",
    "globals()",
    "density > 1 g/cm^3 and [x for x in ()]",
])
def test_code_is_just_a_parse_error(expr):
    with pytest.raises(InputError, match="^--where: "):
        parse_where(expr)


def test_parsing_never_calls_eval_or_exec(monkeypatch):
    def refuse(*_a, **_k):
        raise AssertionError("eval/exec/compile called")

    monkeypatch.setattr(builtins, "eval", refuse)
    monkeypatch.setattr(builtins, "exec", refuse)
    monkeypatch.setattr(builtins, "compile", refuse)
    assert parse_where("relative_permittivity > 3 and not (family = gas or max_temperature < 85 degC)")[0] == "and"
    with pytest.raises(InputError):
        parse_where("__import__('os')")


def test_deep_nesting_and_long_expressions_are_refused_not_crashed():
    ok = "(" * (MAX_DEPTH - 1) + "has density" + ")" * (MAX_DEPTH - 1)
    assert parse_where(ok) == ("has", "density")
    for expr in ("(" * 3000 + "has density" + ")" * 3000, "not " * 3000 + "has density",
                 " or ".join(["has density"] * 3000), "(" * (MAX_DEPTH + 1) + "has density" + ")" * (MAX_DEPTH + 1)):
        with pytest.raises(InputError, match="too (long|deeply)"):
            parse_where(expr)


def test_non_text_is_refused():
    with pytest.raises(InputError):
        parse_where(None)


_KEYS = sorted(PROPERTIES)
_PIECES = st.one_of(
    st.sampled_from(_KEYS + ["family", "response", "origin", "and", "or", "not", "has", "AND", "Not",
                             "polymer-film", "gas", "linear", "lab", "degC", "°C", "V/um", "V/µm", "g/cm^3", "%",
                             "kg", "K", "__import__", "os", "eval", "lambda", "1e999", "nan", "inf"]),
    st.sampled_from(["<", "<=", ">", ">=", "=", "==", "!=", "(", ")", " ", "  ", "'", '"', ".", ",", ";", "[", "]",
                     "-", "+", "*", "/", "^", "~", "\\", "\n", "\t", "\x00", "µ", "³"]),
    st.from_regex(r"[-+]?\d{1,4}(\.\d{0,3})?([eE][-+]?\d{1,3})?", fullmatch=True),
)


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(st.lists(_PIECES, max_size=14).map(" ".join), st.lists(_PIECES, max_size=14).map("".join),
                 st.text(max_size=40)))
def test_any_text_parses_or_raises_input_error(expr):
    try:
        tree = parse_where(expr)
    except InputError as exc:
        assert str(exc).startswith("--where: ")
        return
    # What parses is a tree of known node kinds over known keys, evaluable on any material.
    assert tree[0] in ("or", "and", "not", "has", "attr", "cmp")
    evaluate(tree, {k: None for k in _KEYS}, {"family": "gas", "response": "linear", "origin": "catalog"})


_CMP = {"<": operator.lt, "<=": operator.le, ">": operator.gt, ">=": operator.ge}


@settings(max_examples=150, deadline=None)
@given(values=st.lists(st.one_of(st.none(), st.floats(1.0, 1e4)), min_size=1, max_size=8),
       op=st.sampled_from(sorted(_CMP)), threshold=st.floats(1.0, 1e4), negate=st.booleans())
def test_a_filter_never_admits_an_out_of_range_value(make_material, values, op, threshold, negate):
    mats = [make_material(f"m{i}", [] if v is None else [("relative_permittivity", v, "handbook")],
                          family="composite")
            for i, v in enumerate(values)]
    expr = f"relative_permittivity {op} {threshold!r}"
    pred = compile_where(f"not ({expr})" if negate else expr)
    for m, v in zip(mats, values, strict=True):
        admitted = pred(m)
        if v is None:
            assert admitted == negate  # a missing value fails every comparison, so only 'not' admits it
        else:
            assert admitted == (_CMP[op](v, threshold) != negate), (v, op, threshold)


@settings(max_examples=60, deadline=None)
@given(t_C=st.floats(-100.0, 300.0), low_C=st.floats(-100.0, 300.0), high_C=st.floats(-100.0, 300.0))
def test_a_range_filter_admits_only_values_inside_it(make_material, t_C, low_C, high_C):
    # Offset units in comparisons: degC converted before comparing with the stored kelvin.
    m = make_material("m", [("max_temperature", t_C + 273.15, "standard")])
    admitted = compile_where(f"max_temperature >= {low_C!r} degC and max_temperature <= {high_C!r} degC")(m)
    t_K, lo_K, hi_K = t_C + 273.15, low_C + 273.15, high_C + 273.15
    assert admitted == (lo_K <= t_K <= hi_K)


def test_filters_compare_the_reference_value(make_material):
    # The reference value: small-signal, nearest 25 °C and 1 kHz; a bias-field row does not count.
    m = make_material("c", [
        ("relative_permittivity", 2000.0, "handbook", {"temperature_K": 298.15, "frequency_Hz": 1e3}),
        ("relative_permittivity", 1500.0, "handbook", {"temperature_K": 398.15, "frequency_Hz": 1e3}),
        ("relative_permittivity", 500.0, "handbook", {"temperature_K": 298.15, "frequency_Hz": 1e3,
                                                      "field_V_per_m": 2e7}),
    ], family="ceramic-class-2")
    assert compile_where("relative_permittivity = 2000")(m)
    assert not compile_where("relative_permittivity < 1000")(m)


def test_attributes_and_has(make_material):
    film = make_material("f", [("density", 905.0, "handbook")], family="polymer-film")
    gas = make_material("g", [], family="gas", response="linear")
    pred = compile_where("family = gas or has density")
    assert pred(film) and pred(gas)
    assert compile_where("family != gas and not has loss_tangent")(film)
    assert not compile_where("family != gas")(gas)


def test_list_materials_filters_in_the_store(mini_store):
    from db.query import list_materials

    with mini_store.session() as s:
        keys = [m.key for m in list_materials(s, where="max_temperature >= 125 degC")]
        assert keys == ["mini-x7r"]
        keys = [m.key for m in list_materials(s, where="breakdown_field > 100 V/um or family = gas")]
        assert keys == ["mini-air", "mini-film"]
        assert [m.key for m in list_materials(s, family="glass", where="relative_permittivity > 5")] == ["mini-glass"]
        assert list_materials(s, where="relative_permittivity > 1e4") == []
