// On a narrow screen each row of a list table is shown as a card (style.css); each cell then
// carries its column's heading, copied here from the table's head as data-label.
document.querySelectorAll("table.list").forEach(function (table) {
  var heads = Array.prototype.map.call(table.querySelectorAll("thead th"), function (th) {
    return th.textContent.replace(/[▲▼]/g, "").trim();
  });
  table.querySelectorAll("tbody > tr").forEach(function (tr) {
    var col = 0;
    Array.prototype.forEach.call(tr.children, function (td) {
      var label = heads[col];
      // a cell across several columns (the findings under a setup) belongs to none of them
      if (label && (td.colSpan || 1) === 1 && !td.hasAttribute("data-label")) {
        td.setAttribute("data-label", label);
      }
      col += td.colSpan || 1;
    });
  });
});
