(function () {
  "use strict";
  // The register without this script: every row, in the register's own order, and
  // no search box. With it: a filter over the rows, sortable columns and a search
  // over the whole site (the index the build put in the page).

  // ---- filter the rows
  var box = document.getElementById("filter-box");
  var input = document.getElementById("filter");
  var out = document.getElementById("filter-count");
  var rows = document.querySelectorAll("tr[data-search]");
  function apply() {
    var words = input.value.toLowerCase().split(/\s+/).filter(function (w) { return w.length > 0; });
    var shown = 0;
    for (var i = 0; i < rows.length; i++) {
      var text = rows[i].getAttribute("data-search") || "";
      var keep = words.every(function (w) { return text.indexOf(w) !== -1; });
      rows[i].hidden = !keep;
      if (keep) { shown++; }
    }
    if (out) { out.textContent = shown + " of " + rows.length + " cases shown"; }
  }
  if (box && input) {
    box.hidden = false;
    input.addEventListener("input", apply);
    apply();
  }

  // ---- sortable columns: a button in each sortable heading; aria-sort says the order
  function sortKey(row, col, kind) {
    var cell = row.cells[col];
    var v = cell ? (cell.getAttribute("data-sort") || cell.textContent || "") : "";
    return kind === "number" ? parseFloat(v) || 0 : v.toLowerCase();
  }
  function sortBy(table, th, col, kind) {
    var body = table.tBodies[0];
    var next = th.getAttribute("aria-sort") === "ascending" ? "descending" : "ascending";
    var heads = table.tHead.rows[0].cells;
    for (var i = 0; i < heads.length; i++) { heads[i].removeAttribute("aria-sort"); }
    th.setAttribute("aria-sort", next);
    var list = Array.prototype.slice.call(body.rows).map(function (r, i) { return [r, i]; });
    list.sort(function (a, b) {
      var x = sortKey(a[0], col, kind), y = sortKey(b[0], col, kind);
      var c = x < y ? -1 : x > y ? 1 : 0;
      if (next === "descending") { c = -c; }
      return c !== 0 ? c : a[1] - b[1]; // equal keys keep the register's order
    });
    list.forEach(function (p) { body.appendChild(p[0]); });
  }
  var tables = document.querySelectorAll("table.register");
  Array.prototype.forEach.call(tables, function (table) {
    if (!table.tHead || !table.tBodies[0]) { return; }
    Array.prototype.forEach.call(table.tHead.rows[0].cells, function (th, col) {
      var kind = th.getAttribute("data-sort-kind");
      if (!kind) { return; }
      var button = document.createElement("button");
      button.type = "button";
      button.textContent = th.textContent;
      button.title = "Sort the cases by " + th.textContent;
      th.setAttribute("data-label", th.textContent); // the heading's words, for print
      th.textContent = "";
      th.appendChild(button);
      button.addEventListener("click", function () { sortBy(table, th, col, kind); });
    });
  });

  // ---- search the whole site (cases, species, methods, guide) in the page's own index
  var sbox = document.getElementById("search-box");
  var sinput = document.getElementById("search");
  var scount = document.getElementById("search-count");
  var list = document.getElementById("search-results");
  var data = document.getElementById("search-index");
  if (!sbox || !sinput || !list || !data) { return; }
  var index;
  try { index = JSON.parse(data.textContent); } catch (e) { return; }
  if (!index || index.format !== 1 || !index.entries) { return; }
  sbox.hidden = false;
  var KINDS = { "case": "case", "species": "species record", "methods": "methods", "guide": "guide" };
  function search() {
    var words = sinput.value.toLowerCase().split(/\s+/).filter(function (w) { return w.length > 0; });
    while (list.firstChild) { list.removeChild(list.firstChild); }
    if (words.length === 0) { scount.textContent = ""; return; }
    var hits = index.entries.filter(function (e) {
      return words.every(function (w) { return e.w.indexOf(w) !== -1; });
    });
    scount.textContent = hits.length + (hits.length === 1 ? " page found" : " pages found") +
      (hits.length > 30 ? "; the first 30 are listed" : "");
    hits.slice(0, 30).forEach(function (e) {
      var li = document.createElement("li");
      var a = document.createElement("a");
      a.href = e.u;
      a.textContent = e.t;
      var kind = document.createElement("span");
      kind.className = "kind";
      kind.textContent = " (" + (KINDS[e.k] || e.k) + ")";
      li.appendChild(a);
      li.appendChild(kind);
      list.appendChild(li);
    });
  }
  sinput.addEventListener("input", search);
  // a link to the register can carry a search: index.html#search=nitro
  var asked = /^#search=(.*)$/.exec(window.location.hash);
  if (asked) { sinput.value = decodeURIComponent(asked[1].replace(/\+/g, " ")); }
  search();
})();
