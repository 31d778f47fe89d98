(function () {
  "use strict";
  var box = document.getElementById("filter-box");
  var input = document.getElementById("filter");
  var out = document.getElementById("filter-count");
  if (!box || !input) { return; }
  box.hidden = false;
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
  input.addEventListener("input", apply);
  apply();
})();
