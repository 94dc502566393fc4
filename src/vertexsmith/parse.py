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
from functools import lru_cache
from typing import IO, Any, Callable, Iterator, Mapping

import lark
from lark import Lark, Token, Transformer, Tree
from lark.exceptions import UnexpectedCharacters, UnexpectedEOF, UnexpectedInput, UnexpectedToken, VisitError

from . import limits
from . import syntax as sx
from ._cache import cached_build
from ._resources import grammar_text
from .errors import ModelMeaningError, ModelSyntaxError, Source, Span, VertexsmithError
from .parse_tree import ToHandRules, ToSyntax

MAX_MODEL_BYTES = limits.MODEL_BYTES.limit
MAX_HAND_BYTES = limits.HAND_RULES_BYTES.limit

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


_MODEL = _Language("model.lark", _CONTINUING, ToSyntax, "the model", _EXPECTED_WORDS, _model_character_hint,
                   _model_token_hint, "the model nests brackets too deeply", "flatten the expression",
                   points_at_open_bracket=True, keywords=_MODEL_KEYWORDS)
_HAND_RULES = _Language("handrules.lark", _HAND_CONTINUING, ToHandRules, "the hand rules", _HAND_EXPECTED_WORDS,
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
