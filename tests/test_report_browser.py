"""The report page opened in a real headless Chromium (the system's package, driven over its
debugging pipe by tests/_chromium.py): no console errors, every vertex drawn with the right legs
and line styles, formulas laid out, the filter box narrowing the list as a user types.

Skipped with the reason when no Chromium is installed (`apt-get install chromium`; CI installs it).
A screenshot of the page is written to $VERTEXSMITH_SCREENSHOTS (default: pytest's temporary
folder) for a person to look at.
"""

from __future__ import annotations

import itertools
import os
from pathlib import Path

import pytest

import vertexsmith as vs
from vertexsmith.render.html import render

from _chromium import Browser, find_chromium

CHROMIUM = find_chromium()
pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="no Chromium on this machine (apt-get install chromium); "
                                                          "the report page cannot be opened in a browser")
MODEL = "electroweak_unbroken"  # the largest shipped model: every line style occurs in it

LEGS_SCRIPT = """
Array.prototype.map.call(document.querySelectorAll('section.vertex'), function (card) {
  return Array.prototype.map.call(card.querySelectorAll('svg.picture g.leg'), function (g) {
    var line = g.querySelector('path.line');
    var d = line.getAttribute('d').match(/-?[0-9.]+/g).map(Number);
    var n = d.length;
    var chord = Math.hypot(d[n - 2] - d[0], d[n - 1] - d[1]);
    var box = line.getBoundingClientRect();
    return {style: g.getAttribute('data-style'), label: g.getAttribute('data-label'),
            dash: getComputedStyle(line).strokeDasharray, ratio: line.getTotalLength() / chord,
            arrows: g.querySelectorAll('polygon.arrow').length, drawn: box.width + box.height > 20};
  });
})
"""
MATH_SCRIPT = """
Array.prototype.map.call(document.querySelectorAll('section.vertex .factor math'), function (m) {
  var box = m.getBoundingClientRect();
  return [box.width, box.height, m.namespaceURI];
})
"""
VISIBLE_SCRIPT = ("Array.prototype.filter.call(document.querySelectorAll('section.vertex'), function (c) {"
                  " return c.getClientRects().length !== 0; }).length")


@pytest.fixture(scope="module")
def rules():
    return vs.load_model(vs.example(MODEL)).derive()


@pytest.fixture(scope="module")
def page(rules, tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    path = folder / f"{MODEL}.html"
    path.write_text(render(rules, diagnostics=vs.load_model(vs.example(MODEL)).check()), encoding="utf-8")
    with Browser(CHROMIUM, width=1280, height=900) as browser:
        browser.open(path.as_uri())
        yield browser


def _dashes(value: str) -> list[float]:
    return [float(x.strip().removesuffix("px")) for x in value.replace(",", " ").split()] if value != "none" else []


def test_no_console_errors_or_exceptions(page):
    assert page.problems() == []


def test_every_vertex_is_drawn_with_its_legs_in_the_trades_line_styles(page, rules):
    drawn = page.evaluate(LEGS_SCRIPT)
    assert len(drawn) == len(rules.vertices)
    for vertex, legs in zip(rules.vertices, drawn):
        assert [leg["label"] for leg in legs] == list(vertex.labels)
        for leg, seen in zip(vertex.legs, legs):
            # common practice, no source: scalar dashed, fermion solid with an arrow, ghost dotted
            # with an arrow, photon/W-like wavy, gluon curly
            assert seen["drawn"], seen
            if leg.kind == "scalar":
                assert seen["style"] == "dashed" and _dashes(seen["dash"])[0] >= 4 and seen["arrows"] == 0
            elif leg.kind == "dirac":
                assert seen["style"] == "fermion" and seen["dash"] == "none" and seen["arrows"] == 1
                assert seen["ratio"] == pytest.approx(1.0, abs=0.01)
            elif leg.kind == "ghost":
                assert seen["style"] == "dotted" and _dashes(seen["dash"])[0] <= 2 and seen["arrows"] == 1
            else:
                gluon = any(rep == "adjoint" and dim >= 8 for _, rep, dim in leg.representations)
                assert seen["style"] == ("curly" if gluon else "wavy") and seen["dash"] == "none"
                # a wave is longer than its chord; loops are much longer
                assert seen["ratio"] > (2.0 if gluon else 1.1), seen


def test_every_factor_is_laid_out_as_mathml(page, rules):
    boxes = page.evaluate(MATH_SCRIPT)
    assert len(boxes) == len(rules.vertices)
    for width, height, namespace in boxes:
        assert namespace == "http://www.w3.org/1998/Math/MathML" and width > 20 and height > 8


def _expected(rules, words: list[str]) -> int:
    """Vertices where each typed word can take a leg of its own (brute force over assignments)."""
    fields = {leg.field for v in rules.vertices for leg in v.legs}
    labels = {leg.label for v in rules.vertices for leg in v.legs}

    def fits(word, leg):
        if word in fields:
            return leg.field == word
        if word in labels:
            return leg.label == word
        return leg.field.lower().startswith(word.lower())

    count = 0
    for v in rules.vertices:
        if any(all(fits(w, v.legs[k]) for w, k in zip(words, chosen))
               for chosen in itertools.permutations(range(len(v.legs)), len(words))):
            count += 1
    return count


@pytest.mark.parametrize("typed", ["", "G", "H", "dag(H)", "bar(L)", "W W", "G G G G", "dag(H) H", "gh", "u", "zz"])
def test_the_filter_narrows_the_vertices_to_the_fields_typed(page, rules, typed):
    page.type_into("#filter", typed) if typed else page.evaluate(
        "(function(){var e=document.getElementById('filter');e.value='';"
        "e.dispatchEvent(new Event('input'));}())")
    expected = _expected(rules, typed.split())
    assert page.evaluate(VISIBLE_SCRIPT) == expected
    assert page.evaluate("document.getElementById('filter-count').textContent") == \
        f"{expected} of {len(rules.vertices)} vertices"
    empty_shown = page.evaluate("document.getElementById('filter-empty').getClientRects().length !== 0")
    assert empty_shown == (expected == 0)
    assert page.problems() == []


def test_a_screenshot_is_written(page, tmp_path_factory):
    page.evaluate("(function(){var e=document.getElementById('filter');e.value='';"
                  "e.dispatchEvent(new Event('input'));}())")
    folder = Path(os.environ.get("VERTEXSMITH_SCREENSHOTS") or tmp_path_factory.mktemp("screenshots")).resolve()
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / f"report-{MODEL}.png"
    page.screenshot(target)
    data = target.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 50_000
    width = int.from_bytes(data[16:20], "big")
    height = int.from_bytes(data[20:24], "big")
    assert width == 1280 and height > 3000  # the whole page, not just the window
    print(f"screenshot of the report page: {target}")
