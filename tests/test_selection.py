"""Selecting vertices and giving parameter values on the command line and in values files."""

from __future__ import annotations

import json

import pytest
import sympy

import vertexsmith as vs
from vertexsmith.cli import main
from vertexsmith.errors import UsageError
from vertexsmith.selection import parse_number, parse_values, select_rules, values_text, with_values


@pytest.fixture(scope="module")
def ew():
    return vs.load_model(vs.example("electroweak_unbroken")).derive()


@pytest.mark.parametrize(("text", "value"), [
    ("0.3", sympy.Rational(3, 10)), ("-2.5e-3", sympy.Rational(-1, 400)), ("7", sympy.Integer(7)),
    ("0.3 - 0.1i", sympy.Rational(3, 10) - sympy.I / 10), ("1+i", 1 + sympy.I), ("2i", 2 * sympy.I),
    ("-i", -sympy.I), ("+.5e1", sympy.Integer(5)),
], ids=str)
def test_numbers_of_the_values_format(text, value):
    assert parse_number(text) == value


@pytest.mark.parametrize("text", ["", "abc", "1e", "1 2i", "0x10", "1/2", "nan", "inf", "1,5", "i i"])
def test_not_numbers(text):
    with pytest.raises(ValueError):
        parse_number(text)


def test_values_file_errors_point_at_the_place():
    with pytest.raises(UsageError) as caught:
        parse_values("# scan start\ne = 0.3\n  me = 0.5x   # electron\n", "scan.vals")
    err = caught.value
    assert (err.span.line, err.span.column, err.message) == (3, 8, "'0.5x' is not a number")
    assert str(err).splitlines() == ["scan.vals:3:8: error: '0.5x' is not a number",
                                     "    me = 0.5x   # electron",
                                     "         ^^^^",
                                     "  hint: write a number such as 0.31, -2.5e-3 or, for a complex parameter, 0.3 - 0.1i"]
    with pytest.raises(UsageError) as caught:
        parse_values("e 0.3\n", "v")
    assert (caught.value.span.line, caught.value.span.column, caught.value.message) == (1, 1, "expected 'name = number'")
    with pytest.raises(UsageError) as caught:
        parse_values("\n2e = 0.3\n", "v")
    assert (caught.value.span.line, caught.value.message) == (2, "'2e' is not a parameter name")


def test_written_values_read_back_to_the_same_numbers():
    model = vs.load_model(vs.example("electroweak_unbroken"))
    text = values_text(model)
    values = parse_values(text)
    assert set(values) == {name for name, p in model.parameters.items()
                           if p.definition is None or not p.definition.free_symbols}
    again = with_values(model, values)
    assert again.parameter_values() == model.parameter_values()  # exactly: repr reads back to the same float
    assert values_text(again) == text


def test_values_replace_the_models_numbers_and_defined_ones_follow():
    # qed: e is defined from alpha (e = sqrt(4 pi alpha)); changing alpha must move e
    model = vs.load_model(vs.example("qed"))
    changed = with_values(model, {"alpha": sympy.Rational(1, 100)})
    e = sympy.Symbol("e", real=True)
    assert changed.parameter_values()[e] == pytest.approx((4 * 3.141592653589793 / 100) ** 0.5)
    assert model.parameter_values()[e] != changed.parameter_values()[e]  # the original is untouched
    vertex = changed.derive().vertex("bar(ele)", "ele", "A")
    p = [[1, 0, 0, 0]] * 3
    assert abs(vertex.evaluate(p)).max() == pytest.approx((4 * 3.141592653589793 / 100) ** 0.5)


@pytest.mark.parametrize(("values", "message", "hint"), [
    ({"alpah": 1}, "unknown parameter 'alpah'", "did you mean 'alpha'?"),
    ({"e": 1}, "'e' is computed from other parameters (2*sqrt(pi)*sqrt(alpha)) in the model",
     "set the parameters it is computed from instead"),
    ({"alpha": sympy.I}, "'alpha' is a real parameter, but the value given is complex: I",
     "give a real number, or declare 'alpha' complex in the model"),
])
def test_bad_values(values, message, hint):
    with pytest.raises(UsageError) as caught:
        with_values(vs.load_model(vs.example("qed")), values)
    assert (caught.value.message, caught.value.hint) == (message, hint)


def test_select_by_fields_keeps_the_vertices_with_all_of_them(ew):
    picked = select_rules(ew, fields=("H", "W"))
    assert [v.labels for v in picked.vertices] == [v.labels for v in ew.vertices
                                                   if {"H", "W"} <= {leg.field for leg in v.legs}]
    assert len(picked.vertices) == 3
    assert [p.field for p in picked.propagators] == ["W", "H"]
    # a name given twice asks for two such legs; a label asks for that leg
    assert [v.labels for v in select_rules(ew, fields=("W", "W")).vertices] == [
        ("W", "W", "W"), ("H", "dag(H)", "W", "W"), ("W", "W", "W", "W")]
    assert [v.labels for v in select_rules(ew, fields=("bar(eR)",)).vertices] == [
        ("bar(eR)", "L", "dag(H)"), ("bar(eR)", "eR", "B")]


def test_select_by_legs_gives_the_one_vertex_in_the_order_asked(ew):
    picked = select_rules(ew, legs=("W", "bar(L)", "L"))
    assert [v.labels for v in picked.vertices] == [("W", "bar(L)", "L")]
    assert picked.vertices[0].factor == ew.vertex("W", "bar(L)", "L").factor


def test_unknown_names_get_a_suggestion(ew):
    with pytest.raises(UsageError) as caught:
        select_rules(ew, fields=("eL",))
    assert caught.value.message == "unknown field or leg 'eL'" and "'eR'" in caught.value.hint
    with pytest.raises(UsageError) as caught:
        select_rules(ew, legs=("bar(eR)", "eR", "G"))
    assert caught.value.message == "no vertex with legs bar(eR) eR G"


def test_command_line_selection_and_values(capsys, tmp_path):
    assert main(["rules", "electroweak_unbroken", "-f", "json", "--field", "G", "--set", "gs=1.5"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {tuple(leg["label"] for leg in v["legs"]) for v in data["vertices"]} == {
        ("G", "G", "G"), ("bar(Q)", "Q", "G"), ("bar(dR)", "dR", "G"), ("bar(gh_G)", "gh_G", "G"),
        ("bar(uR)", "uR", "G"), ("G", "G", "G", "G")}
    gs = next(p for p in data["parameters"] if p["name"] == "gs")
    assert gs["value"] == {"real": 1.5, "imag": 0.0}

    values = tmp_path / "start.vals"
    assert main(["values", "qed", "--set", "alpha=0.01", "-o", str(values)]) == 0
    assert parse_values(values.read_text())["alpha"] == sympy.Rational(1, 100)
    assert main(["rules", "qed", "-f", "json", "--values", str(values)]) == 0
    alpha = next(p for p in json.loads(capsys.readouterr().out)["parameters"] if p["name"] == "alpha")
    assert alpha["value"]["real"] == 0.01

    assert main(["export", "qed", "--to", "json", "--legs", "A bar(ele) ele"]) == 0
    assert [[leg["label"] for leg in v["legs"]] for v in json.loads(capsys.readouterr().out)["vertices"]] == [
        ["A", "bar(ele)", "ele"]]


@pytest.mark.parametrize(("argv", "message"), [
    (["rules", "qed", "--set", "alpah=1"], "unknown parameter 'alpah'\n  hint: did you mean 'alpha'?"),
    (["rules", "qed", "--set", "alpha"], "--set needs NAME=VALUE, got 'alpha'"),
    (["rules", "qed", "--set", "alpha=one"], "--set alpha: 'one' is not a number"),
    (["rules", "qed", "--field", "Ele"], "unknown field or leg 'Ele'\n  hint: did you mean 'ele'"),
    (["check", "qed", "--values", "/nonexistent/x.vals"], "cannot read the values file '/nonexistent/x.vals'"),
])
def test_command_line_mistakes_exit_2_with_a_message(capsys, argv, message):
    assert main(argv) == 2
    assert message in capsys.readouterr().err


@pytest.mark.parametrize("label, message, hint", [
    ("bar(s)", "'s' is its own conjugate, so 'bar(s)' names no leg", "write s"),
    ("dag(f)", "'dag(f)' names no leg: 'f' is a dirac field", "write bar(f)"),
    ("bar(phi)", "'bar(phi)' names no leg: 'phi' is a scalar field", "write dag(phi)"),
], ids=["real-scalar", "fermion-with-dag", "scalar-with-bar"])
def test_a_wrong_conjugate_of_a_known_field_says_what_is_wrong(label: str, message: str, hint: str) -> None:
    # the nearest names ('bar(f)' for 'bar(s)') would send the user to another field
    rules = vs.load_model(vs.example("dark_majorana")).derive()
    with pytest.raises(UsageError) as info:
        select_rules(rules, legs=[label])
    assert (info.value.message, info.value.hint) == (message, hint)
