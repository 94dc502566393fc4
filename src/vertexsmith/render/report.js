// vertexsmith report page: the filter box narrows the vertices to those with the fields typed.
// A word names a field (any leg of it) or a leg label (bar(e), dag(s): that leg only); a word
// that names neither matches the beginning of a field name, so the list narrows while a name is
// typed. Words repeated ask for that many legs ("G G G": vertices with three or more G legs).
// Each word takes a leg of its own; labels are served first, then fields, then beginnings, so
// that "H dag(H)" finds the vertices with both legs whatever the order typed.
(function () {
  "use strict";
  var box = document.getElementById("filter");
  var count = document.getElementById("filter-count");
  var empty = document.getElementById("filter-empty");
  if (!box) { return; }
  var cards = Array.prototype.slice.call(document.querySelectorAll("section.vertex"));
  var fields = {};
  var labels = {};
  var legsOf = cards.map(function (card) {
    var legs = JSON.parse(card.getAttribute("data-legs"));
    legs.forEach(function (leg) { fields[leg[0]] = true; labels[leg[1]] = true; });
    return legs;
  });
  function rank(word) {
    if (fields[word]) { return 1; }
    return labels[word] ? 0 : 2;
  }
  function fits(word, leg) {
    if (fields[word]) { return leg[0] === word; }
    if (labels[word]) { return leg[1] === word; }
    return leg[0].toLowerCase().indexOf(word.toLowerCase()) === 0;
  }
  function matches(legs, words) {
    var used = legs.map(function () { return false; });
    return words.every(function (word) {
      for (var k = 0; k !== legs.length; k += 1) {
        if (!used[k] && fits(word, legs[k])) { used[k] = true; return true; }
      }
      return false;
    });
  }
  function apply() {
    var words = box.value.split(/[\s,;]+/).filter(function (w) { return w.length !== 0; });
    words.sort(function (a, b) { return rank(a) - rank(b); });
    var shown = 0;
    cards.forEach(function (card, k) {
      var visible = matches(legsOf[k], words);
      card.classList.toggle("hidden", !visible);
      if (visible) { shown += 1; }
    });
    count.textContent = shown + " of " + cards.length + " vertices";
    empty.classList.toggle("hidden", shown !== 0);
  }
  box.addEventListener("input", apply);
  apply();
}());
