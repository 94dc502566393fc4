"""MathML of our LaTeX, for pages a browser shows without fetching a maths typesetter.

The conversion is done by latex2mathml (a kept, pure-Python library declared in pyproject);
our LaTeX is the single source, so the page shows exactly what the LaTeX output prints. The
library is imported on first use, so that commands which never write MathML do not pay for it.
Results are cached: the same factor appears in several places of a page.

    >>> "<math" in latex_to_mathml("i e \\\\gamma^{\\\\mu_{3}}")
    True
"""

from __future__ import annotations

from functools import lru_cache
from html import escape


_SLASH_IN = '<mpadded width="0"><mtext>&#x029F8;</mtext></mpadded>'
_SLASH_OUT = '<mpadded width="0" lspace="0.05em"><mi mathvariant="normal">/</mi></mpadded>'


@lru_cache(maxsize=4096)
def latex_to_mathml(latex: str, display: bool = False) -> str:
    """One ``<math>`` element for a LaTeX formula; on a formula the converter cannot read, the LaTeX as code."""
    from latex2mathml.converter import convert

    try:
        result: str = convert(latex, display="block" if display else "inline")
    except Exception:  # noqa: BLE001 - a converter failure must not lose the page: show the source instead
        return f'<code class="latex-fallback">{escape(latex)}</code>'
    # the converter draws the Feynman slash with a glyph (U+29F8) that common fonts lack; an
    # ordinary solidus laid over the letter shows everywhere
    return result.replace(_SLASH_IN, _SLASH_OUT)


__all__ = ["latex_to_mathml"]
