/**
 * The report's only script, inlined: sort tables of class "sortable" by a column when its heading
 * button is pressed (numbers by their data-sort value, missing values last; text by locale order).
 * No data, no network; the page reads fully without it.
 */
export const SORT_SCRIPT = `
(function () {
  function key(row, col) { var c = row.cells[col]; return c ? (c.getAttribute('data-sort') || '') : ''; }
  function sortBy(table, col, type, dir) {
    var body = table.tBodies[0];
    var rows = Array.prototype.slice.call(body.rows);
    rows.sort(function (a, b) {
      var x = key(a, col), y = key(b, col);
      if (x === '' && y === '') return 0;
      if (x === '') return 1;
      if (y === '') return -1;
      var d = type === 'num' ? Number(x) - Number(y) : x.localeCompare(y);
      return dir === 'ascending' ? d : -d;
    });
    rows.forEach(function (r) { body.appendChild(r); });
  }
  document.querySelectorAll('table.sortable').forEach(function (table) {
    var heads = table.tHead ? table.tHead.rows[0].cells : [];
    Array.prototype.forEach.call(heads, function (th, col) {
      var b = th.querySelector('button');
      if (!b) return;
      b.addEventListener('click', function () {
        var dir = th.getAttribute('aria-sort') === 'ascending' ? 'descending' : 'ascending';
        Array.prototype.forEach.call(heads, function (h) { h.setAttribute('aria-sort', 'none'); });
        th.setAttribute('aria-sort', dir);
        sortBy(table, col, th.getAttribute('data-type'), dir);
      });
    });
  });
})();
`;
