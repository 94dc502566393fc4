"""Text to syntax nodes: the only module that imports lark.

The parser is built once, lazily. A small post-lexer makes newlines significant only where a
declaration or a Lagrangian term ends: inside brackets and after a binary operator a line goes on.
Lark's errors are translated here into `ModelSyntaxError` with a position and a hint.
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache
from typing import Any, Iterator

from lark import Lark, Token, Transformer, v_args
from lark.exceptions import UnexpectedCharacters, UnexpectedEOF, UnexpectedInput, UnexpectedToken, VisitError

from . import syntax as sx
from ._resources import grammar_text
from .errors import ModelSyntaxError, Source, Span, VertexsmithError

MAX_MODEL_BYTES = 2_000_000

_PARAM_WORDS = {"MASS", "COUPLING", "ANGLE", "WIDTH", "PARAMETER", "REAL", "COMPLEX"}
_OPENERS = {"LPAR", "LSQB"}
_CLOSERS = {"RPAR", "RSQB"}
# a line that ends in one of these goes on to the next line
_CONTINUING = {"PLUS", "MINUS", "STAR", "SLASH", "CIRCUMFLEX", "COMMA", "EQUAL", "LPAR", "LSQB"}


class _LineJoiner:
    """Drop newlines inside brackets and after a trailing binary operator."""

    always_accept = ("_NL",)

    def process(self, stream: Iterator[Token]) -> Iterator[Token]:
        depth = 0
        previous: Token | None = None
        for token in stream:
            if token.type == "_NL":
                if depth > 0 or (previous is not None and previous.type in _CONTINUING):
                    continue
            elif token.type in _OPENERS:
                depth += 1
            elif token.type in _CLOSERS:
                depth = max(0, depth - 1)
            previous = token
            yield token


@lru_cache(maxsize=1)
def _parser() -> Lark:
    return Lark(grammar_text(), parser="lalr", postlex=_LineJoiner(), propagate_positions=True,
                maybe_placeholders=False)


def _span(meta: Any) -> Span:
    if getattr(meta, "empty", True):
        return Span(0, 0, 0, 0)
    return Span(meta.line, meta.column, meta.end_line, max(meta.column, meta.end_column - 1))


def _token_span(token: Token) -> Span:
    end = (token.end_column or token.column + len(token)) - 1
    return Span(token.line or 0, token.column or 0, token.end_line or token.line or 0, max(token.column or 0, end))


def _ratio(tokens: list[Token], meta: Any) -> Fraction:
    value = Fraction(str(tokens[0]))
    if len(tokens) == 2:
        if Fraction(str(tokens[1])) == 0:
            raise ModelSyntaxError("division by zero in a number", _span(meta), "write a non-zero denominator")
        value /= Fraction(str(tokens[1]))
    return value


def _string(token: Token | None) -> str:
    return str(token)[1:-1] if token is not None else ""


@v_args(meta=True)
class _ToSyntax(Transformer):
    """Lark tree to syntax nodes; one method per grammar rule or alias."""

    # --- expressions
    def number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(str(children[0]), _span(meta))

    def symbol(self, meta: Any, children: list[Any]) -> sx.Symbol:
        indices = children[1] if len(children) > 1 else ()
        return sx.Symbol(str(children[0]), tuple(indices), _span(meta))

    def index_list(self, meta: Any, children: list[Token]) -> tuple[sx.Index, ...]:
        return tuple(sx.Index(str(t), _token_span(t)) for t in children)

    def call(self, meta: Any, children: list[Any]) -> sx.Call:
        return sx.Call(str(children[0]), children[1], _span(meta))

    def group(self, meta: Any, children: list[Any]) -> sx.Group:
        return sx.Group(children[0], _span(meta))

    def hc(self, meta: Any, children: list[Any]) -> sx.HermitianConjugate:
        return sx.HermitianConjugate(_span(meta))

    def _summands(self, node: Any) -> tuple[tuple[int, Any], ...]:
        # flatten left-nested sums, but not bracketed ones (those are sx.Group)
        return node.terms if isinstance(node, sx.Sum) else ((1, node),)

    def add(self, meta: Any, children: list[Any]) -> sx.Sum:
        return sx.Sum(self._summands(children[0]) + ((1, children[1]),), _span(meta))

    def sub(self, meta: Any, children: list[Any]) -> sx.Sum:
        return sx.Sum(self._summands(children[0]) + ((-1, children[1]),), _span(meta))

    def neg(self, meta: Any, children: list[Any]) -> sx.Sum:
        return sx.Sum(((-1, children[0]),), _span(meta))

    def pos(self, meta: Any, children: list[Any]) -> Any:
        return children[0]

    def mul(self, meta: Any, children: list[Any]) -> sx.Product:
        left, right = children
        factors = left.factors if isinstance(left, sx.Product) else (left,)
        return sx.Product(factors + (right,), _span(meta))

    def div(self, meta: Any, children: list[Any]) -> sx.Quotient:
        return sx.Quotient(children[0], children[1], _span(meta))

    def pow(self, meta: Any, children: list[Any]) -> sx.Power:
        return sx.Power(children[0], children[1], _span(meta))

    def exp_number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(str(children[0]), _span(meta))

    def exp_negative(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number("-" + str(children[0]), _span(meta))

    def exp_group(self, meta: Any, children: list[Any]) -> Any:
        return children[0]

    # --- declarations
    def theory_decl(self, meta: Any, children: list[Any]) -> sx.TheoryDecl:
        return sx.TheoryDecl(str(children[0]), _string(children[1] if len(children) > 1 else None), _span(meta))

    def param_word(self, meta: Any, children: list[Token]) -> Token:
        return children[0]

    def param_decl(self, meta: Any, children: list[Any]) -> sx.ParamDecl:
        words = [c for c in children if isinstance(c, Token) and c.type in _PARAM_WORDS]
        rest = children[len(words):]
        name = str(rest[0])
        value = next((c for c in rest[1:] if not isinstance(c, Token)), None)
        description = next((c for c in rest[1:] if isinstance(c, Token) and c.type == "STRING"), None)
        roles = tuple(str(w) for w in words if w.type not in ("REAL", "COMPLEX"))
        reality = "complex" if any(str(w) == "complex" for w in words) else "real"
        return sx.ParamDecl(name, roles, reality, value, _string(description), _span(meta))

    def reality_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("reality", str(children[0]), _span(meta))

    def mass_name(self, meta: Any, children: list[Token]) -> tuple[str, Span]:
        return (str(children[0]), _span(meta))

    def mass_number(self, meta: Any, children: list[Token]) -> tuple[Fraction, Span]:
        return (Fraction(str(children[0])), _span(meta))

    def mass_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("mass", children[-1], _span(meta))

    def plus_number(self, meta: Any, children: list[Token]) -> Fraction:
        return _ratio(children, meta)

    def minus_number(self, meta: Any, children: list[Token]) -> Fraction:
        return -_ratio(children, meta)

    def charge_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("charge", sx.ChargeAttr(str(children[0]), children[1], _span(meta)), _span(meta))

    def rep_attr(self, meta: Any, children: list[Any]) -> tuple[str, Any, Span]:
        return ("rep", sx.RepAttr(str(children[0]), str(children[1]), _span(meta)), _span(meta))

    def field_decl(self, meta: Any, children: list[Any]) -> sx.FieldDecl:
        kind, name = str(children[0]), str(children[1])
        reality: str | None = None
        mass: Any = None
        mass_span: Span | None = None
        charges: list[sx.ChargeAttr] = []
        reps: list[sx.RepAttr] = []
        description = ""
        for child in children[2:]:
            if isinstance(child, Token):
                description = _string(child)
                continue
            key, value, _ = child
            if key == "reality":
                reality = value
            elif key == "mass":
                mass, mass_span = value
            elif key == "charge":
                charges.append(value)
            else:
                reps.append(value)
        return sx.FieldDecl(kind, name, reality, mass, tuple(charges), tuple(reps), description,
                            _span(meta), mass_span)

    def boson_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("boson", str(c[0]), _token_span(c[0]))

    def strength_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("strength", str(c[0]), _token_span(c[0]))

    def coupling_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("coupling", str(c[-1]), _token_span(c[-1]))

    def fixing_attr(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("fixing", str(c[0]), _token_span(c[0]))

    def gauge_decl(self, meta: Any, children: list[Any]) -> sx.GaugeDecl:
        name, group, rank = str(children[0]), str(children[1]), str(children[2])
        attrs: dict[str, str] = {}
        spans: list[tuple[str, Span]] = [("group", _token_span(children[1]))]
        for key, value, span in children[3:]:
            attrs[key] = value
            spans.append((key, span))
        return sx.GaugeDecl(name, group, rank, attrs.get("boson"), attrs.get("strength"),
                            attrs.get("coupling"), attrs.get("fixing"), _span(meta), tuple(spans))

    def definition(self, meta: Any, children: list[Any]) -> sx.Definition:
        indices = children[1] if len(children) == 3 else ()
        return sx.Definition(str(children[0]), tuple(indices), children[-1], _span(meta))

    def lagrangian_term(self, meta: Any, children: list[Any]) -> sx.LagrangianTerm:
        return sx.LagrangianTerm(children[0], getattr(children[0], "span", _span(meta)))

    def convention_word(self, meta: Any, children: list[Token]) -> sx.Convention:
        return sx.Convention(str(children[0]), str(children[1]), _span(meta))

    def convention_number(self, meta: Any, children: list[Any]) -> sx.Convention:
        return sx.Convention(str(children[0]), children[1], _span(meta))

    # --- sections
    def parameters_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("parameters", children)

    def fields_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("fields", children)

    def gauge_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("gauges", children)

    def definitions_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("definitions", children)

    def lagrangian_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("terms", children)

    def conventions_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("conventions", children)

    def start(self, meta: Any, children: list[Any]) -> sx.ModelFile:
        parts: dict[str, list[Any]] = {k: [] for k in
                                       ("parameters", "fields", "gauges", "definitions", "terms", "conventions")}
        for key, items in children[1:]:
            parts[key].extend(items)
        return sx.ModelFile(children[0], *(tuple(parts[k]) for k in
                                           ("parameters", "fields", "gauges", "definitions", "terms", "conventions")))


_EXPECTED_WORDS = {
    "NAME": "a name", "NUMBER": "a number", "STRING": "a quoted description", "_NL": "the end of the line",
    "LPAR": "'('", "RPAR": "')'", "LSQB": "'['", "RSQB": "']'", "COMMA": "','", "EQUAL": "'='",
    "PLUS": "'+'", "MINUS": "'-'", "STAR": "'*'", "SLASH": "'/'", "CIRCUMFLEX": "'^'",
    "FIELD_KIND": "a field kind (scalar, dirac, vector, ...)", "MASS": "'mass'", "COUPLING": "'coupling'",
    "REAL": "'real'", "COMPLEX": "'complex'", "FUNC": "a function such as bar( or sqrt(", "HC": "'h.c.'",
    "THEORY": "'theory'", "$END": "the end of the file",
}

_SECTION_WORDS = ("parameters", "fields", "gauge", "define", "lagrangian", "conventions")


def _describe_expected(expected: set[str]) -> str:
    words = sorted({_EXPECTED_WORDS.get(e, f"'{e.lower()}'" if e.isupper() and len(e) > 1 else e)
                    for e in expected if not e.startswith("__")})
    return ", ".join(words[:8])


def _syntax_error(exc: UnexpectedInput, text: str) -> ModelSyntaxError:
    line = getattr(exc, "line", 0) or 0
    column = getattr(exc, "column", 0) or 0
    if isinstance(exc, UnexpectedCharacters):
        char = text[exc.pos_in_stream] if 0 <= exc.pos_in_stream < len(text) else "?"
        hint = "names are letters, digits and underscores; write products with a space or '*'"
        if char == "'":
            hint = "strings are written in double quotes"
        return ModelSyntaxError(f"unexpected character {char!r}", Span.point(line, column), hint)
    if isinstance(exc, UnexpectedToken):
        token = exc.token
        expected = _describe_expected(set(exc.expected))
        if token.type == "$END":
            lines = text.splitlines() or [""]
            return ModelSyntaxError("the file ends too early", Span.point(len(lines), len(lines[-1]) + 1),
                                    f"expected {expected}")
        shown = "end of line" if token.type == "_NL" else repr(str(token))
        if token.type == "_NL":
            line, column = token.line or line, token.column or column
        hint = f"expected {expected}"
        if line == 1 and token.type != "THEORY" and "THEORY" in exc.expected:
            hint = "a model file starts with: theory NAME \"description\""
        elif str(token) in _SECTION_WORDS:
            hint = f"'{token}' starts a section; it stands alone on its line"
        elif "_NL" in exc.expected and token.type in ("NAME", "NUMBER"):
            hint = f"expected {expected}; a declaration or term ends at the end of its line"
        return ModelSyntaxError(f"unexpected {shown}", Span.point(line, column), hint)
    if isinstance(exc, UnexpectedEOF):
        lines = text.splitlines() or [""]
        return ModelSyntaxError("the file ends too early", Span.point(len(lines), len(lines[-1]) + 1),
                                "close every bracket and finish the last line")
    return ModelSyntaxError(str(exc).splitlines()[0], Span.point(line, column))


def _unclosed_bracket(text: str) -> tuple[int, int] | None:
    """Line and column of the last bracket that is never closed (comments and strings skipped)."""
    stack: list[tuple[int, int]] = []
    for number, line in enumerate(text.splitlines(), start=1):
        in_string = False
        for column, char in enumerate(line, start=1):
            if char == '"':
                in_string = not in_string
            elif in_string:
                continue
            elif char == "#":
                break
            elif char in "([":
                stack.append((number, column))
            elif char in ")]" and stack:
                stack.pop()
    return stack[-1] if stack else None


def parse_text(text: str, name: str = "<model>") -> sx.ModelFile:
    """Parse model-file text into syntax nodes, or raise `ModelSyntaxError` with a position."""
    source = Source(name, text)
    if len(text.encode("utf-8", "replace")) > MAX_MODEL_BYTES:
        raise ModelSyntaxError(f"the model file is larger than {MAX_MODEL_BYTES} bytes",
                               hint="split the model or remove generated text").with_source(source)
    if "\x00" in text:
        offset = text.index("\x00")
        line = text.count("\n", 0, offset) + 1
        column = offset - (text.rfind("\n", 0, offset) + 1) + 1
        raise ModelSyntaxError("the file contains a NUL byte; is it a text file?",
                               Span.point(line, column), "save the model as plain UTF-8 text").with_source(source)
    padded = text if text.endswith("\n") else text + "\n"
    try:
        tree = _parser().parse(padded)
        result = _ToSyntax().transform(tree)
    except VisitError as exc:
        inner = exc.orig_exc
        if isinstance(inner, VertexsmithError):
            raise inner.with_source(source) from None
        raise ModelSyntaxError(f"could not read the model: {inner}").with_source(source) from None
    except UnexpectedInput as exc:
        error = _syntax_error(exc, padded)
        opener = _unclosed_bracket(padded)
        if opener is not None and error.message == "the file ends too early":
            error = ModelSyntaxError("this bracket is never closed", Span.point(*opener),
                                     "close it on the same term; a line goes on while a bracket is open")
        raise error.with_source(source) from None
    except RecursionError:
        raise ModelSyntaxError("the model nests brackets too deeply",
                               hint="flatten the expression").with_source(source) from None
    assert isinstance(result, sx.ModelFile)
    return result
