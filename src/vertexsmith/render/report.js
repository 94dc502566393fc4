// vertexsmith report page: the filter box narrows the vertices to those with the fields typed.
// A word names a field or a leg label (bar(e), dag(s)); a word that names none matches the
// beginning of a field name, so the list narrows while the name is typed. Words repeated
// ask for that many legs ("G G G" finds the vertices with three or more G legs).
(function () {
  "use strict";
  var box = document.getElementById("filter");
  var count = document.getElementById("filter-count");
  var empty = document.getElementById("filter-empty");
  if (!box) { return; }
  var cards = Array.prototype.slice.call(document.querySelectorAll("section.vertex"));
  var known = {};
  var legsOf = cards.map(function (card) {
    var legs = JSON.parse(card.getAttribute("data-legs"));
    legs.forEach(function (leg) { known[leg[0]] = true; known[leg[1]] = true; });
    return legs;
  });
  function fits(word, leg) {
    if (known[word]) { return leg[0] === word || leg[1] === word; }
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
