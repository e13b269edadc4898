// Sortable tables: each header of a table.sortable becomes a button; a click sorts the rows by
// that column (ascending, then descending). Cells with data-v sort by that number, the rest by
// their text; numbers come before text. Without scripts the tables keep their printed order.
(function () {
  "use strict";
  function key(row, i) {
    var c = row.cells[i];
    if (!c) return "";
    var v = c.getAttribute("data-v");
    if (v !== null && v !== "") {
      var x = parseFloat(v);
      if (!isNaN(x)) return x;
    }
    return c.textContent.trim().toLowerCase();
  }
  function sortBy(table, i, th) {
    var asc = th.getAttribute("aria-sort") !== "ascending";
    var heads = table.tHead.rows[0].cells;
    for (var k = 0; k < heads.length; k++) heads[k].removeAttribute("aria-sort");
    th.setAttribute("aria-sort", asc ? "ascending" : "descending");
    var body = table.tBodies[0];
    var rows = Array.prototype.slice.call(body.rows);
    rows.sort(function (a, b) {
      var x = key(a, i), y = key(b, i), r;
      if (typeof x === "number" && typeof y === "number") r = x - y;
      else if (typeof x === "number") r = -1;
      else if (typeof y === "number") r = 1;
      else r = x < y ? -1 : x > y ? 1 : 0;
      return asc ? r : -r;
    });
    rows.forEach(function (r) { body.appendChild(r); });
  }
  var tables = document.querySelectorAll("table.sortable");
  Array.prototype.forEach.call(tables, function (table) {
    if (!table.tHead || !table.tBodies.length) return;
    var heads = table.tHead.rows[0].cells;
    Array.prototype.forEach.call(heads, function (th, i) {
      var b = document.createElement("button");
      b.type = "button";
      b.title = "Sort by this column";
      while (th.firstChild) b.appendChild(th.firstChild);
      th.appendChild(b);
      b.addEventListener("click", function () { sortBy(table, i, th); });
    });
  });
})();
