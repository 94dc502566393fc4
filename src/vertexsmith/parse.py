"""Text to syntax nodes: the only module that imports lark.

Two languages are read here: model files (`parse_text`, grammar/model.lark) and the small files of
hand-derived rules that `compare` checks (`parse_hand_rules_text`, grammar/handrules.lark). Each
parser is built once, lazily. A small post-lexer makes newlines significant only where a
declaration, a Lagrangian term or a rule ends: inside brackets and after a binary operator a line
goes on. Lark's errors are translated here into `ModelSyntaxError` with a position and a hint.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache
from typing import IO, Any, Callable, Iterator, Mapping

import lark
from lark import Lark, Token, Transformer, Tree, v_args
from lark.exceptions import UnexpectedCharacters, UnexpectedEOF, UnexpectedInput, UnexpectedToken, VisitError

from . import limits
from . import syntax as sx
from ._cache import cached_build
from ._resources import grammar_text
from .errors import ModelMeaningError, ModelSyntaxError, Source, Span, VertexsmithError

MAX_MODEL_BYTES = limits.MODEL_BYTES.limit
MAX_HAND_BYTES = limits.HAND_RULES_BYTES.limit

_PARAM_WORDS = {"MASS", "COUPLING", "ANGLE", "WIDTH", "PARAMETER", "REAL", "COMPLEX", "HERMITIAN", "UNITARY"}
_MATRIX_WORDS = ("hermitian", "unitary")
_OPENERS = {"LPAR", "LSQB", "LBRACE"}
_CLOSERS = {"RPAR", "RSQB", "RBRACE"}
# a line that ends in one of these goes on to the next line; in hand rules also one that ends in
# the colon between the legs and the factor (no '=' there)
_CONTINUING = frozenset({"PLUS", "MINUS", "STAR", "SLASH", "CIRCUMFLEX", "COMMA", "EQUAL", "LPAR", "LSQB"})
_HAND_CONTINUING = frozenset({"PLUS", "MINUS", "STAR", "SLASH", "CIRCUMFLEX", "COMMA", "COLON", "LPAR", "LSQB"})


class _LineJoiner:
    """Drop newlines inside brackets and after a token of `continuing` (a trailing operator)."""

    always_accept = ("_NL",)

    def __init__(self, continuing: frozenset[str]) -> None:
        self.continuing = continuing

    def process(self, stream: Iterator[Token]) -> Iterator[Token]:
        depth = 0
        previous: Token | None = None
        for token in stream:
            if token.type == "_NL":
                if depth > 0 or (previous is not None and previous.type in self.continuing):
                    continue
            elif token.type in _OPENERS:
                depth += 1
            elif token.type in _CLOSERS:
                depth = max(0, depth - 1)
            previous = token
            yield token


@lru_cache(maxsize=2)
def _parser(language: _Language) -> Lark:
    """The language's parser, built once per process and kept on disk between runs (see `_cache.py`)."""
    grammar = grammar_text(language.grammar)
    options: dict[str, Any] = {"parser": "lalr", "propagate_positions": True, "maybe_placeholders": False}

    def build() -> Lark:
        return Lark(grammar, postlex=_LineJoiner(language.continuing), **options)

    def save(parser: Lark, stream: IO[bytes]) -> None:
        parser.save(stream, {"postlex"})

    def load(stream: IO[bytes]) -> Lark:
        # lark's own loader, as its cache= option uses it: the one that takes the post-lexer again
        return Lark.__new__(Lark)._load(stream, postlex=_LineJoiner(language.continuing))

    key = "\0".join([grammar, repr(sorted(options.items())), lark.__version__])
    return cached_build(f"parser-{language.grammar.removesuffix('.lark')}", key, build, save, load)


def _span(meta: Any) -> Span:
    if getattr(meta, "empty", True):
        return Span(0, 0, 0, 0)
    return Span(meta.line, meta.column, meta.end_line, max(meta.column, meta.end_column - 1))


def _token_span(token: Token) -> Span:
    end = (token.end_column or (token.column or 0) + len(token)) - 1
    return Span(token.line or 0, token.column or 0, token.end_line or token.line or 0, max(token.column or 0, end))


MAX_NUMBER_DIGITS = limits.NUMBER_DIGITS.limit
MAX_EXPONENT = limits.NUMBER_EXPONENT.limit


def _checked(token: Token) -> str:
    """A number token's text, refused when it is too long or overflows a float."""
    text = str(token)
    mantissa, _, exponent = text.lower().partition("e")
    if len(mantissa) > MAX_NUMBER_DIGITS or (exponent and abs(int(exponent)) > MAX_EXPONENT):
        raise ModelSyntaxError(f"the number '{text[:20]}{'...' if len(text) > 20 else ''}' is too large to use",
                               _token_span(token),
                               f"numbers have at most {MAX_NUMBER_DIGITS} digits and exponents up to "
                               f"e{MAX_EXPONENT}; use a parameter in sensible units")
    return text


def _ratio(tokens: list[Token], meta: Any) -> Fraction:
    tokens = [Token(t.type, _checked(t), t.start_pos, t.line, t.column, t.end_line, t.end_column, t.end_pos)
              for t in tokens]
    value = Fraction(str(tokens[0]))
    if len(tokens) == 2:
        if Fraction(str(tokens[1])) == 0:
            raise ModelSyntaxError("division by zero in a number", _span(meta), "write a non-zero denominator")
        value /= Fraction(str(tokens[1]))
    return value


def _string(token: Token | None) -> str:
    return str(token)[1:-1] if token is not None else ""


@v_args(meta=True)
class _Operators(Transformer):
    """Signed sums, products, quotients and powers, built alike in both languages.

    Each subclass names its own node classes. Left-nested sums and products are flattened; a
    bracketed model expression is an `sx.Group` and stays whole.
    """

    _sum: type[Any]
    _product: type[Any]
    _quotient: type[Any]
    _power: type[Any]

    def _summands(self, node: Any) -> tuple[tuple[int, Any], ...]:
        return node.terms if isinstance(node, self._sum) else ((1, node),)

    def add(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(self._summands(children[0]) + ((1, children[1]),), _span(meta))

    def sub(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(self._summands(children[0]) + ((-1, children[1]),), _span(meta))

    def flat_sum(self, meta: Any, children: list[Any]) -> Any:
        # a chain of + and - flattened by _flatten_chains: first, sign, term, sign, term, ...
        terms = list(self._summands(children[0]))
        terms += [(1 if sign == "+" else -1, term) for sign, term in zip(children[1::2], children[2::2])]
        return self._sum(tuple(terms), _span(meta))

    def flat_product(self, meta: Any, children: list[Any]) -> Any:
        limits.check_budget(limits.PRODUCT_FACTORS, len(children), _span(meta), "this product",
                            "write repeated factors as a power, or split the term", ModelSyntaxError)
        factors = list(children[0].factors if isinstance(children[0], self._product) else (children[0],))
        return self._product(tuple(factors + children[1:]), _span(meta))

    def neg(self, meta: Any, children: list[Any]) -> Any:
        return self._sum(((-1, children[0]),), _span(meta))

    def pos(self, meta: Any, children: list[Any]) -> Any:
        return children[0]

    def mul(self, meta: Any, children: list[Any]) -> Any:
        left, right = children
        factors = left.factors if isinstance(left, self._product) else (left,)
        return self._product(factors + (right,), _span(meta))

    def div(self, meta: Any, children: list[Any]) -> Any:
        return self._quotient(children[0], children[1], _span(meta))

    def pow(self, meta: Any, children: list[Any]) -> Any:
        return self._power(children[0], children[1], _span(meta))


@v_args(meta=True)
class _ToSyntax(_Operators):
    """Lark tree to syntax nodes; one method per grammar rule or alias (operators in `_Operators`)."""

    _sum, _product, _quotient, _power = sx.Sum, sx.Product, sx.Quotient, sx.Power

    # --- expressions
    def number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(_checked(children[0]), _span(meta))

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

    def exp_number(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number(_checked(children[0]), _span(meta))

    def exp_negative(self, meta: Any, children: list[Any]) -> sx.Number:
        return sx.Number("-" + _checked(children[0]), _span(meta))

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
        spaces: tuple[sx.Index, ...] = ()
        if len(rest) > 1 and isinstance(rest[1], tuple):
            spaces = rest[1]
            rest = rest[:1] + rest[2:]
        value = next((c for c in rest[1:] if not isinstance(c, Token)), None)
        description = next((c for c in rest[1:] if isinstance(c, Token) and c.type == "STRING"), None)
        roles = tuple(str(w) for w in words if w.type not in ("REAL", "COMPLEX", "HERMITIAN", "UNITARY"))
        reality = "complex" if any(str(w) == "complex" for w in words) else "real"
        matrix = next((str(w) for w in words if str(w) in _MATRIX_WORDS), "")
        return sx.ParamDecl(name, roles, reality, value, _string(description), _span(meta), spaces, matrix)

    def array(self, meta: Any, children: list[Any]) -> sx.Array:
        return sx.Array(tuple(children), _span(meta))

    def space_decl(self, meta: Any, children: list[Token]) -> sx.SpaceDecl:
        return sx.SpaceDecl(str(children[0]), _checked(children[1]), _token_span(children[1]),
                            _string(children[2] if len(children) > 2 else None), _span(meta))

    def over_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("over", sx.Index(str(children[0]), _token_span(children[0])), _span(meta))

    def reality_attr(self, meta: Any, children: list[Token]) -> tuple[str, Any, Span]:
        return ("reality", str(children[0]), _span(meta))

    def mass_name(self, meta: Any, children: list[Token]) -> tuple[str, Span]:
        return (str(children[0]), _span(meta))

    def mass_number(self, meta: Any, children: list[Token]) -> tuple[Fraction, Span]:
        return (Fraction(_checked(children[0])), _span(meta))

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
        spaces: list[sx.Index] = []
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
            elif key == "over":
                spaces.append(value)
            else:
                reps.append(value)
        return sx.FieldDecl(kind, name, reality, mass, tuple(charges), tuple(reps), description,
                            _span(meta), mass_span, tuple(spaces))

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

    def global_decl(self, meta: Any, children: list[Any]) -> sx.GlobalDecl:
        option = children[3] if len(children) > 3 else None
        return sx.GlobalDecl(str(children[0]), str(children[1]), str(children[2]), _span(meta),
                             _token_span(children[1]), str(option) if option is not None else None,
                             _token_span(option) if option is not None else None)

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

    def spaces_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("spaces", children)

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

    def global_section(self, meta: Any, children: list[Any]) -> tuple[str, list[Any]]:
        return ("globals_", children)

    def start(self, meta: Any, children: list[Any]) -> sx.ModelFile:
        parts: dict[str, list[Any]] = {k: [] for k in
                                       ("parameters", "fields", "gauges", "definitions", "terms", "conventions",
                                        "globals_", "spaces")}
        for key, items in children[1:]:
            parts[key].extend(items)
        return sx.ModelFile(children[0], *(tuple(parts[k]) for k in
                                           ("parameters", "fields", "gauges", "definitions", "terms", "conventions",
                                            "globals_", "spaces")))


@v_args(meta=True)
class _ToHandRules(_Operators):
    """Lark tree of a hand-rules file to hand-rule nodes; one method per grammar rule or alias."""

    _sum, _product, _quotient, _power = sx.HSum, sx.HProduct, sx.HQuotient, sx.HPower

    # --- factors
    def number(self, meta: Any, c: list[Any]) -> sx.HNumber:
        return sx.HNumber(Fraction(_checked(c[0])), _token_span(c[0]))

    def negative_number(self, meta: Any, c: list[Any]) -> sx.HNumber:
        return sx.HNumber(-Fraction(_checked(c[0])), _token_span(c[0]))

    def index_list(self, meta: Any, c: list[Any]) -> tuple[tuple[str, Span], ...]:
        return tuple((str(t), _token_span(t)) for t in c)

    def name(self, meta: Any, c: list[Any]) -> sx.HName:
        return sx.HName(str(c[0]), c[1] if len(c) > 1 else (), _span(meta))

    def dot(self, meta: Any, c: list[Any]) -> sx.HDot:
        return sx.HDot(str(c[0]), str(c[1]), _span(meta))

    def indexed(self, meta: Any, c: list[Any]) -> sx.HIndexed:
        return sx.HIndexed(c[0], c[1], _span(meta))

    def call(self, meta: Any, c: list[Any]) -> sx.HCall:
        return sx.HCall(str(c[0]), tuple(c[1:]), _span(meta))

    # --- rules: tuples that parse_hand_rules_text turns into HandRule records
    def plain_leg(self, meta: Any, c: list[Any]) -> tuple[str, Span]:
        return (str(c[0]), _token_span(c[0]))

    def conjugate_leg(self, meta: Any, c: list[Any]) -> tuple[str, Span]:
        return (f"{c[0]}({c[1]})", _span(meta))

    def vertex_rule(self, meta: Any, c: list[Any]) -> tuple[str, Any, Any, Span]:
        return ("vertex", c[:-1], c[-1], _span(meta))

    def propagator_rule(self, meta: Any, c: list[Any]) -> tuple[str, Any, Any, Span]:
        return ("propagator", c[:-1], c[-1], _span(meta))

    def gauge_choice(self, meta: Any, c: list[Token]) -> tuple[str, str, Span]:
        return ("gauge", str(c[0]), _token_span(c[0]))

    def start(self, meta: Any, c: list[Any]) -> list[Any]:
        return list(c)


_EXPECTED_WORDS = {
    "NAME": "a name", "NUMBER": "a number", "STRING": "a quoted description", "_NL": "the end of the line",
    "LPAR": "'('", "RPAR": "')'", "LSQB": "'['", "RSQB": "']'", "COMMA": "','", "EQUAL": "'='",
    "PLUS": "'+'", "MINUS": "'-'", "STAR": "'*'", "SLASH": "'/'", "CIRCUMFLEX": "'^'",
    "FIELD_KIND": "a field kind (scalar, dirac, vector, ...)", "MASS": "'mass'", "COUPLING": "'coupling'",
    "REAL": "'real'", "COMPLEX": "'complex'", "FUNC": "a function such as bar( or sqrt(", "HC": "'h.c.'",
    "THEORY": "'theory'", "$END": "the end of the file",
}

_HAND_EXPECTED_WORDS = {
    "NAME": "a name", "NUMBER": "a number", "_NL": "the end of the line", "LPAR": "'('", "RPAR": "')'",
    "LSQB": "'['", "RSQB": "']'", "COMMA": "','", "COLON": "':'", "PLUS": "'+'", "MINUS": "'-'",
    "STAR": "'*'", "SLASH": "'/'", "CIRCUMFLEX": "'^'", "DOT": "'.'", "CONJ": "bar( or dag(",
    "FUNC": "a function such as slash( or sqrt(", "VERTEX": "'vertex'", "PROPAGATOR": "'propagator'",
    "GAUGE": "'gauge'", "$END": "the end of the file",
}

_SECTION_WORDS = ("parameters", "fields", "gauge", "define", "lagrangian", "conventions", "global")
# the words a declaration line may start or go on with: a near miss of one of them is named in the hint
_MODEL_KEYWORDS = _SECTION_WORDS + ("theory", "mass", "coupling", "angle", "width", "parameter", "real", "complex",
                                    "scalar", "dirac", "majorana", "vector", "charge", "boson", "strength",
                                    "fixing")
_NAMES_HINT = "names are letters, digits and underscores; write products with a space or '*'"


def _describe_expected(expected: set[str], words: Mapping[str, str]) -> str:
    described = sorted({words.get(e, f"'{e.lower()}'" if e.isupper() and len(e) > 1 else e)
                        for e in expected if not e.startswith("__")})
    return ", ".join(described[:8])


def _model_character_hint(char: str) -> str:
    return "strings are written in double quotes" if char == "'" else _NAMES_HINT


def _model_token_hint(exc: UnexpectedToken, at: Span, expected: str) -> str:
    token = exc.token
    if at.line == 1 and token.type != "THEORY" and "THEORY" in exc.expected:
        return "a model file starts with: theory NAME \"description\""
    if str(token) in _SECTION_WORDS:
        return f"'{token}' starts a section; it stands alone on its line"
    if "_NL" in exc.expected and token.type in ("NAME", "NUMBER"):
        return f"expected {expected}; a declaration or term ends at the end of its line"
    return f"expected {expected}"


_DECLARATION_SECTIONS = {**{kind: "fields" for kind in ("scalar", "dirac", "majorana", "vector", "ghost")},
                         **{word: "parameters" for word in ("mass", "coupling", "angle", "width", "parameter")}}


def _misplaced_declaration(text: str, error: ModelSyntaxError) -> ModelSyntaxError | None:
    """A field or parameter declaration under the wrong header (or none), named as such.

    Without its header, `vector G` reads as the start of a gauge line or a Lagrangian term, and
    the parser's own complaint ("expected '('") says nothing the user can act on.
    """
    lines = text.split("\n")
    if not 0 < error.span.line <= len(lines):
        return None
    words = lines[error.span.line - 1].split("#")[0].split()
    wanted = _DECLARATION_SECTIONS.get(words[0]) if words else None
    if wanted is None:
        return None
    section = next((line.strip() for line in reversed(lines[:error.span.line - 1])
                    if line.strip() in _SECTION_WORDS and not line[:1].isspace()), None)
    if section == wanted:
        return None
    column = lines[error.span.line - 1].index(words[0]) + 1
    kind = "field" if wanted == "fields" else "parameter"
    where = f"under '{section}'" if section else "before any section header"
    return ModelSyntaxError(f"'{words[0]}' starts a {kind} declaration, but this line is {where}",
                            Span(error.span.line, column, error.span.line, column + len(words[0]) - 1),
                            f"write '{wanted}' on its own line before the {kind} declarations")


def _hand_token_hint(exc: UnexpectedToken, at: Span, expected: str) -> str:
    if exc.column == 1 or exc.token.type == "NAME" and "VERTEX" in exc.expected:
        return "a rule starts with 'vertex LEGS : FACTOR', 'propagator FIELD : FACTOR' or 'gauge NAME'"
    return f"expected {expected}"


@dataclass(frozen=True, eq=False)
class _Language:
    """One language read here: its grammar and Transformer, and the wording of its errors."""

    grammar: str
    continuing: frozenset[str]
    transformer: Callable[[], Transformer]
    noun: str  # as in "could not read the model: ..."
    expected_words: Mapping[str, str]
    character_hint: Callable[[str], str]
    token_hint: Callable[[UnexpectedToken, Span, str], str]
    too_deep: str
    too_deep_hint: str = ""
    points_at_open_bracket: bool = False  # "the file ends too early" becomes "this bracket is never closed"
    keywords: tuple[str, ...] = ()  # words whose misspellings are pointed out


_MODEL = _Language("model.lark", _CONTINUING, _ToSyntax, "the model", _EXPECTED_WORDS, _model_character_hint,
                   _model_token_hint, "the model nests brackets too deeply", "flatten the expression",
                   points_at_open_bracket=True, keywords=_MODEL_KEYWORDS)
_HAND_RULES = _Language("handrules.lark", _HAND_CONTINUING, _ToHandRules, "the hand rules", _HAND_EXPECTED_WORDS,
                        lambda char: _NAMES_HINT, _hand_token_hint, "the hand rules nest brackets too deeply")


def _misspelled_keyword(text: str, line: int, column: int, keywords: tuple[str, ...]) -> ModelSyntaxError | None:
    """A syntax error caused by a misspelt keyword (`couplng y = 0.1`), pointed at the word itself.

    The word the parser stopped at, or the word just before it, is a near miss of a keyword of
    the language (and no declared-looking name of its own): the user meant the keyword.
    """
    lines = text.splitlines()
    if not keywords or not 0 < line <= len(lines):
        return None
    words = [(w.group(), w.start() + 1) for w in re.finditer(r"[^\W\d][\w']*", lines[line - 1])]
    at = next((k for k, (_, start) in enumerate(words) if start == column), None)
    candidates = [k for k in (at, at - 1 if at else None) if k is not None and k >= 0]
    for k in candidates:
        word, start = words[k]
        if word in keywords:
            continue
        close = difflib.get_close_matches(word, keywords, n=1, cutoff=0.75)
        if close:
            return ModelSyntaxError(f"unknown word '{word}'", Span(line, start, line, start + len(word) - 1),
                                    f"did you mean '{close[0]}'?")
    return None


def _ends_early(text: str, hint: str) -> ModelSyntaxError:
    lines = (text[:-1] if text.endswith("\n") else text).split("\n")
    return ModelSyntaxError("the file ends too early", Span.point(len(lines), len(lines[-1]) + 1), hint)


def _syntax_error(exc: UnexpectedInput, text: str, language: _Language) -> ModelSyntaxError:
    line = getattr(exc, "line", 0) or 0
    column = getattr(exc, "column", 0) or 0
    if isinstance(exc, UnexpectedCharacters):
        position = exc.pos_in_stream
        char = text[position] if position is not None and 0 <= position < len(text) else "?"
        return ModelSyntaxError(f"unexpected character {char!r}", Span.point(line, column),
                                language.character_hint(char))
    if isinstance(exc, UnexpectedToken):
        token = exc.token
        expected = _describe_expected(set(exc.expected), language.expected_words)
        if token.type == "$END":
            return _ends_early(text, f"expected {expected}")
        shown = "end of line" if token.type == "_NL" else repr(str(token))
        if token.type == "_NL":
            line, column = token.line or line, token.column or column
        at = Span.point(line, column)
        misspelled = _misspelled_keyword(text, line, column, language.keywords)
        if misspelled is not None:
            return misspelled
        return ModelSyntaxError(f"unexpected {shown}", at, language.token_hint(exc, at, expected))
    if isinstance(exc, UnexpectedEOF):
        return _ends_early(text, "close every bracket and finish the last line")
    return ModelSyntaxError(str(exc).splitlines()[0], Span.point(line, column))


def _unclosed_bracket(text: str) -> tuple[int, int] | None:
    """Line and column of the last bracket that is never closed (comments and strings skipped)."""
    stack: list[tuple[int, int]] = []
    for number, line in enumerate(text.split("\n"), start=1):
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


_CHAINS = {"add": "flat_sum", "sub": "flat_sum", "mul": "flat_product"}


def _flat(chain: Tree) -> Tree:
    """One left-nested chain a + b - c ... (or a b c ...) as one node with all its operands."""
    kind = _CHAINS[chain.data]
    parts: list[Any] = []
    node: Any = chain
    while isinstance(node, Tree) and _CHAINS.get(node.data) == kind:
        left, right = node.children
        parts.append(right)
        if kind == "flat_sum":
            parts.append(Token("SIGN", "+" if node.data == "add" else "-"))
        node = left
    parts.append(node)
    parts.reverse()
    return Tree(kind, parts, meta=chain.meta)


def _flatten_chains(tree: Tree) -> Tree:
    """Flatten every chain of sums and products, without recursion.

    Lark builds `1 + 1 + ... + 1` as a left-nested tree as deep as the chain is long; transforming
    that recursively overflows Python's stack at a few thousand terms, and flattening it one level
    at a time costs time quadratic in its length. Flat, both are linear.
    """
    stack = [tree]
    while stack:
        node = stack.pop()
        for i, child in enumerate(node.children):
            if isinstance(child, Tree):
                if child.data in _CHAINS:
                    node.children[i] = child = _flat(child)
                stack.append(child)
    return tree


def _read(text: str, source: Source, language: _Language) -> Any:
    """Parse and transform `text`; every failure becomes one of our errors, carrying `source`."""
    padded = text if text.endswith("\n") else text + "\n"
    limits.check_nesting(padded, source)
    try:
        return language.transformer().transform(_flatten_chains(_parser(language).parse(padded)))
    except VisitError as exc:
        inner = exc.orig_exc
        if isinstance(inner, VertexsmithError):
            raise inner.with_source(source) from None
        raise ModelSyntaxError(f"could not read {language.noun}: {inner}").with_source(source) from None
    except UnexpectedInput as exc:
        error = _syntax_error(exc, padded, language)
        opener = _unclosed_bracket(padded) if language.points_at_open_bracket else None
        if opener is not None and error.message == "the file ends too early":
            error = ModelSyntaxError("this bracket is never closed", Span.point(*opener),
                                     "close it on the same term; a line goes on while a bracket is open")
        elif language is _MODEL:
            error = _misplaced_declaration(padded, error) or error
        raise error.with_source(source) from None
    except RecursionError:
        raise ModelSyntaxError(language.too_deep, hint=language.too_deep_hint).with_source(source) from None


def parse_text(text: str, name: str = "<model>") -> sx.ModelFile:
    """Parse model-file text into syntax nodes, or raise `ModelSyntaxError` with a position."""
    source = Source(name, text)
    if len(text.encode("utf-8", "replace")) > MAX_MODEL_BYTES:
        raise ModelSyntaxError(f"the model file is larger than {MAX_MODEL_BYTES} bytes",
                               hint="split the model or remove generated text").with_source(source)
    limits.check_tokens(text, source)
    if "\x00" in text:
        offset = text.index("\x00")
        line = text.count("\n", 0, offset) + 1
        column = offset - (text.rfind("\n", 0, offset) + 1) + 1
        raise ModelSyntaxError("the file contains a NUL byte; is it a text file?",
                               Span.point(line, column), "save the model as plain UTF-8 text").with_source(source)
    result = _read(text, source, _MODEL)
    assert isinstance(result, sx.ModelFile)
    return result


def _rule_text(text: str, span: Span, factor_span: Span) -> str:
    """The factor as written: the text after the rule's colon, comments dropped, lines joined."""
    lines = text.split("\n")[span.line - 1:max(span.line, factor_span.end_line)]
    joined = " ".join(line.split("#", 1)[0].strip() for line in lines)
    return joined.split(":", 1)[1].strip() if ":" in joined else joined


def parse_hand_rules_text(text: str, name: str = "<hand rules>") -> sx.HandRules:
    """Parse a file of hand-derived rules into nodes, or raise `ModelSyntaxError` with a position.

    The `gauge` line is checked against the three gauges here (`ModelMeaningError`); what the
    names inside a factor mean is left to `compare`, which evaluates the factors.
    """
    source = Source(name, text)
    if len(text.encode("utf-8", "replace")) > MAX_HAND_BYTES:
        raise ModelSyntaxError(f"the hand-rules file is larger than {MAX_HAND_BYTES} bytes").with_source(source)
    rules: list[sx.HandRule] = []
    gauge: str | None = None
    gauge_span = Span(0, 0, 0, 0)
    for item in _read(text, source, _HAND_RULES):
        if item[0] == "gauge":
            if item[1] not in ("xi", "feynman", "unitary"):
                raise ModelMeaningError(f"unknown gauge '{item[1]}'", item[2],
                                        "write gauge feynman, gauge unitary or gauge xi").with_source(source)
            gauge, gauge_span = item[1], item[2]
            continue
        kind, legs, factor, span = item
        if kind == "propagator" and len(legs) > 2:  # pragma: no cover - the grammar allows two legs at most
            raise ModelSyntaxError("a propagator names one field, or two for an entry of a propagator matrix",
                                   span).with_source(source)
        rules.append(sx.HandRule(kind, tuple(label for label, _ in legs), factor, _rule_text(text, span, factor.span),
                                 span, tuple(s for _, s in legs)))
    return sx.HandRules(tuple(rules), gauge, source, gauge_span)
