"""Vertex and propagator pictures as inline SVG, drawn by our own code.

A picture shows each leg in the line style physicists read at a glance: dashed for scalars,
solid with an arrow for fermions (the arrow follows the particle: into the vertex on a `psi` leg,
out of it on a `bar(psi)` leg), wavy for vectors, curly for gluon-like vectors (the adjoint of
SU(N), N >= 3), dotted with an arrow for ghosts. Beside each leg: its label as the model language
writes it, its incoming momentum (a small arrow pointing at the vertex, as the conventions state)
and its index names. Every leg is one ``<g class="leg" data-style="...">`` so that tests and
style sheets can find it. Output is deterministic: coordinates are rounded to 0.1.

    >>> leg_style("vector", (("color", "adjoint", 8),)), leg_style("vector", (("weak", "adjoint", 3),))
    ('curly', 'wavy')
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from html import escape
from typing import Sequence

# line style per kind of line; a vector in an adjoint representation is drawn curly
STYLES = ("dashed", "fermion", "wavy", "curly", "dotted")
# our own palette, one colour per style, readable on white and in greyscale prints
COLOURS = {"dashed": "#2b7a5b", "fermion": "#23408e", "wavy": "#b35a1f", "curly": "#7d3c98", "dotted": "#5d6d7e"}
_WIDTH, _HEIGHT = 300, 230  # wide enough for labels such as bar(gh_W) beside a horizontal leg
_CX, _CY = _WIDTH / 2, _HEIGHT / 2
_INNER = 9.0  # legs start a little away from the vertex dot
_OUTER = 74.0  # and end here, leaving room for the labels


@dataclass(frozen=True)
class LegPicture:
    """What the picture needs of one leg: style, arrow direction, and its three labels."""

    style: str
    label: str
    momentum: str
    indices: tuple[str, ...]
    inward: bool = True  # for arrowed lines: particle flow towards the vertex


def leg_style(kind: str, representations: Sequence[tuple] = ()) -> str:
    """The line style of a field kind; representations are (group, representation, dimension).

    Curly lines are the trade's sign for gluons: a vector in the adjoint of SU(N) with N >= 3
    (dimension 8 or more). Photon-, W- and Z-like vectors (U(1), SU(2)) are wavy.
    """
    if kind in ("dirac", "majorana"):
        return "fermion"
    if kind == "ghost":
        return "dotted"
    if kind == "vector":
        gluon_like = any(len(r) > 2 and r[1] == "adjoint" and r[2] >= 8 for r in representations)
        return "curly" if gluon_like else "wavy"
    return "dashed"


def _fmt(x: float) -> str:
    text = f"{x:.1f}"
    return "0.0" if text == "-0.0" else text


def _along(x0: float, y0: float, ux: float, uy: float, s: float, d: float) -> tuple[float, float]:
    """The point s along the unit direction (ux, uy) from (x0, y0), shifted d to its left."""
    return x0 + s * ux - d * uy, y0 + s * uy + d * ux


def _wavy(x0: float, y0: float, ux: float, uy: float, length: float) -> str:
    waves = max(2, round(length / 14))
    steps = waves * 12
    points = []
    for k in range(steps + 1):
        s = length * k / steps
        points.append(_along(x0, y0, ux, uy, s, 4.5 * math.sin(2 * math.pi * waves * k / steps)))
    return "M" + " L".join(f"{_fmt(x)} {_fmt(y)}" for x, y in points)


def _curly(x0: float, y0: float, ux: float, uy: float, length: float) -> str:
    # a prolate cycloid: the pen runs backwards for part of each turn, which draws the loops
    loops = max(2, round(length / 11))
    radius = 5.0
    pitch = (length - 0.0) / loops
    steps = loops * 16
    points = []
    for k in range(steps + 1):
        phi = 2 * math.pi * loops * k / steps
        s = pitch * phi / (2 * math.pi) - radius * math.sin(phi) * 0.9
        d = radius * (1 - math.cos(phi))
        points.append(_along(x0, y0, ux, uy, min(max(s, 0.0), length), d))
    return "M" + " L".join(f"{_fmt(x)} {_fmt(y)}" for x, y in points)


DASHES = {"dashed": ' stroke-dasharray="7 4"', "dotted": ' stroke-dasharray="1 4" stroke-linecap="round"'}


def line_svg(style: str, x0: float, y0: float, ux: float, uy: float, length: float) -> str:
    """The line itself in its style, from (x0, y0) along the unit direction (ux, uy)."""
    stroke = f'fill="none" stroke="{COLOURS[style]}" stroke-width="{1.6 if style == "curly" else 2}"'
    if style == "wavy":
        return f'<path class="line" d="{_wavy(x0, y0, ux, uy, length)}" {stroke}/>'
    if style == "curly":
        return f'<path class="line" d="{_curly(x0, y0, ux, uy, length)}" {stroke}/>'
    x1, y1 = _along(x0, y0, ux, uy, length, 0.0)
    return (f'<path class="line" d="M{_fmt(x0)} {_fmt(y0)} L{_fmt(x1)} {_fmt(y1)}" {stroke}'
            f'{DASHES.get(style, "")}/>')


def _arrowhead(cx: float, cy: float, ux: float, uy: float, size: float) -> str:
    tip = (cx + size * ux, cy + size * uy)
    left = _along(cx - size * ux, cy - size * uy, ux, uy, 0, size * 0.8)
    right = _along(cx - size * ux, cy - size * uy, ux, uy, 0, -size * 0.8)
    return " ".join(f"{_fmt(x)},{_fmt(y)}" for x, y in (tip, left, right))


def _leg_svg(leg: LegPicture, x0: float, y0: float, x1: float, y1: float) -> str:
    """One leg from (x0, y0) (outer end) to (x1, y1) (vertex side), with its labels."""
    colour = COLOURS[leg.style]
    length = math.hypot(x1 - x0, y1 - y0)
    ux, uy = (x1 - x0) / length, (y1 - y0) / length  # points at the vertex
    parts = [f'<g class="leg" data-style="{leg.style}" data-label="{escape(leg.label)}">']
    parts.append(line_svg(leg.style, x0, y0, ux, uy, length))
    if leg.style in ("fermion", "dotted"):
        direction = 1.0 if leg.inward else -1.0
        mx, my = (x0 + x1) / 2, (y0 + y1) / 2
        parts.append(f'<polygon class="arrow" points="{_arrowhead(mx, my, direction * ux, direction * uy, 5.5)}" '
                     f'fill="{colour}"/>')
    # the momentum arrow, beside the line and pointing at the vertex: every momentum is incoming
    side = 13.0
    ax0, ay0 = _along(x0, y0, ux, uy, length * 0.30, side)
    ax1, ay1 = _along(x0, y0, ux, uy, length * 0.62, side)
    parts.append(f'<path class="momentum" d="M{_fmt(ax0)} {_fmt(ay0)} L{_fmt(ax1)} {_fmt(ay1)}" stroke="#444" '
                 'stroke-width="1"/>')
    parts.append(f'<polygon points="{_arrowhead(ax1, ay1, ux, uy, 3)}" fill="#444"/>')
    tx, ty = _along(x0, y0, ux, uy, length * 0.46, side + 9)
    parts.append(_text(tx, ty, _subscripted(leg.momentum), "momentum-label", 11))
    # the leg's name beyond its outer end, its indices just below
    lx, ly = x0 - ux * 12, y0 - uy * 12
    anchor = "middle" if abs(ux) < 0.35 else ("end" if ux > 0 else "start")
    label_y = ly + 4 + (4 if uy < -0.35 else -2 if uy > 0.35 else 0)
    parts.append(_text(lx, label_y, escape(leg.label), "leg-label", 13, anchor, bold=True))
    if leg.indices:
        index_y = label_y + (13 if uy <= 0.35 else -14)
        parts.append(_text(lx, index_y, " ".join(_subscripted(i) for i in leg.indices), "leg-indices", 10, anchor))
    parts.append("</g>")
    return "".join(parts)


_GREEK = {"mu": "\u03bc", "nu": "\u03bd", "rho": "\u03c1", "sigma": "\u03c3"}


def _subscripted(name: str) -> str:
    """p3 -> p<sub>3</sub> as SVG tspans, mu3 -> the Greek letter with subscript 3, a2_color kept."""
    base, _, tag = name.partition("_")
    stem = base.rstrip("0123456789")
    number = base[len(stem):]
    stem = _GREEK.get(stem, stem)
    text = escape(stem)
    if number:
        text += f'<tspan baseline-shift="sub" font-size="75%">{number}</tspan>'
    if tag:
        text += f'<tspan font-size="70%"> ({escape(tag)})</tspan>'
    return text


def _text(x: float, y: float, content: str, cls: str, size: int, anchor: str = "middle", bold: bool = False) -> str:
    weight = ' font-weight="600"' if bold else ""
    return (f'<text class="{cls}" x="{_fmt(x)}" y="{_fmt(y)}" font-size="{size}" text-anchor="{anchor}"{weight}>'
            f"{content}</text>")


def vertex_svg(legs: Sequence[LegPicture], title: str = "") -> str:
    """A vertex: the legs spread evenly around a dot, leg 1 at the upper left, then clockwise."""
    n = len(legs)
    body = []
    for k, leg in enumerate(legs):
        angle = math.pi - math.pi / n - 2 * math.pi * k / n if n > 1 else math.pi
        cx, cy = math.cos(angle), -math.sin(angle)
        x0, y0 = _CX + _OUTER * cx, _CY + _OUTER * cy
        x1, y1 = _CX + _INNER * cx, _CY + _INNER * cy
        body.append(_leg_svg(leg, x0, y0, x1, y1))
    body.append(f'<circle cx="{_fmt(_CX)}" cy="{_fmt(_CY)}" r="5" fill="#1b1b1b"/>')
    return _svg(body, _WIDTH, _HEIGHT, title, n)


def propagator_svg(leg: LegPicture, title: str = "") -> str:
    """A propagator: one line from left to right, the momentum p along the particle arrow."""
    width, height = 260, 96
    y = 44.0
    x0, x1 = 40.0, width - 40.0
    colour = COLOURS[leg.style]
    ux = 1.0
    length = x1 - x0
    body = [f'<g class="leg" data-style="{leg.style}" data-label="{escape(leg.label)}">',
            line_svg(leg.style, x0, y, ux, 0.0, length)]
    if leg.style in ("fermion", "dotted"):
        body.append(f'<polygon class="arrow" points="{_arrowhead((x0 + x1) / 2, y, 1.0, 0.0, 5.5)}" fill="{colour}"/>')
    body.append(f'<path class="momentum" d="M{_fmt(x0 + 60)} {_fmt(y - 18)} L{_fmt(x1 - 60)} {_fmt(y - 18)}" '
                'stroke="#444" stroke-width="1"/>')
    body.append(f'<polygon points="{_arrowhead(x1 - 60, y - 18, 1.0, 0.0, 3)}" fill="#444"/>')
    body.append(_text(width / 2, y - 25, "p", "momentum-label", 11))
    # the indices of each end under it: the first of each pair belongs to the left end
    ends = leg.indices[0::2], leg.indices[1::2]
    for x, names, anchor in ((x0 - 32, ends[0], "start"), (x1 + 32, ends[1], "end")):
        if names:
            body.append(_text(x, y + 22, " ".join(_subscripted(i) for i in names), "leg-indices", 10, anchor))
    body.append(_text(width / 2, y + 42, escape(leg.label), "leg-label", 13, bold=True))
    body.append("</g>")
    return _svg(body, width, height, title, 1)


def _svg(body: list[str], width: int, height: int, title: str, legs: int) -> str:
    head = (f'<svg xmlns="http://www.w3.org/2000/svg" class="picture" data-legs="{legs}" width="{width}" '
            f'height="{height}" viewBox="0 0 {width} {height}" role="img" font-family="Georgia, serif">')
    caption = f"<title>{escape(title)}</title>" if title else ""
    return head + caption + "".join(body) + "</svg>"


__all__ = ["STYLES", "COLOURS", "DASHES", "line_svg", "LegPicture", "leg_style", "vertex_svg", "propagator_svg"]
