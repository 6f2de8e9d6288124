// Conveniences for the readings grid; the page works without this file.
// Enter moves to the same column in the next row; pasting a block of
// several lines into a grid cell fills the rows below it.
(function () {
  "use strict";
  document.querySelectorAll("table[data-grid]").forEach(function (table) {
    var rows = Array.prototype.slice.call(table.querySelectorAll("tbody tr"));
    function cell(r, c) {
      var inputs = rows[r] ? rows[r].querySelectorAll("input") : [];
      return inputs[c] || null;
    }
    rows.forEach(function (row, r) {
      row.querySelectorAll("input").forEach(function (input, c) {
        input.addEventListener("keydown", function (event) {
          if (event.key === "Enter") {
            event.preventDefault();
            var next = cell(r + 1, c);
            if (next) { next.focus(); }
          }
        });
        input.addEventListener("paste", function (event) {
          var text = (event.clipboardData || window.clipboardData).getData("text");
          if (text.indexOf("\n") < 0 && text.indexOf("\t") < 0) { return; }
          event.preventDefault();
          text.replace(/\r/g, "").split("\n").filter(function (l) { return l.trim() !== ""; })
            .forEach(function (line, i) {
              line.split(/\t|;/).forEach(function (value, j) {
                var target = cell(r + i, c + j);
                if (target) { target.value = value.trim(); }
              });
            });
        });
      });
    });
  });
})();
