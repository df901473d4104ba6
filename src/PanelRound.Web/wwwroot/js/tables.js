// Staff tables: sorting long tables by a column.
// Any <table class="sortable"> gets a <button> in each header cell of its <thead> (except <th data-sort="none">);
// pressing it (mouse or keyboard) sorts the rows of the <tbody> by that column, ascending first, then descending,
// and sets aria-sort on the header. A cell's data-sort-value, when present, is what is compared (a number where the
// text is formatted, e.g. "1,234.5 (n 12)"); otherwise its text. Cells with no value (empty, "–") go last.
// The <tfoot> (totals, benchmarks) stays where it is.
(function () {
  'use strict';

  function valueOf(row, index) {
    var cell = row.cells[index];
    if (!cell) return null;
    var raw = cell.hasAttribute('data-sort-value') ? cell.getAttribute('data-sort-value') : cell.textContent.trim();
    if (raw === '' || raw === '\u2013' || raw === '-') return null;
    var number = Number(raw);
    return isNaN(number) ? raw.toLocaleLowerCase() : number;
  }

  function compare(a, b) {
    if (a === null && b === null) return 0;
    if (a === null) return 1;
    if (b === null) return -1;
    if (typeof a === 'number' && typeof b === 'number') return a - b;
    return String(a).localeCompare(String(b), undefined, { numeric: true });
  }

  function sortBy(table, header, index) {
    var ascending = header.getAttribute('aria-sort') !== 'ascending';
    table.querySelectorAll('thead th[aria-sort]').forEach(function (th) { th.removeAttribute('aria-sort'); });
    header.setAttribute('aria-sort', ascending ? 'ascending' : 'descending');
    Array.prototype.forEach.call(table.tBodies, function (body) {
      var rows = Array.prototype.map.call(body.rows, function (row, position) {
        return { row: row, value: valueOf(row, index), position: position };
      });
      rows.sort(function (x, y) {
        // Empty values last in both directions; ties keep their order.
        if (x.value === null || y.value === null) return compare(x.value, y.value) || x.position - y.position;
        var c = compare(x.value, y.value);
        return (ascending ? c : -c) || x.position - y.position;
      });
      rows.forEach(function (r) { body.appendChild(r.row); });
    });
    var status = table.parentNode.querySelector('.sort-status');
    if (status) {
      status.textContent = 'Sorted by ' + header.textContent.trim() + ', ' + (ascending ? 'ascending' : 'descending') + '.';
    }
  }

  document.querySelectorAll('table.sortable').forEach(function (table) {
    var head = table.tHead;
    if (!head || head.rows.length === 0) return;
    var headerRow = head.rows[head.rows.length - 1];
    Array.prototype.forEach.call(headerRow.cells, function (th, index) {
      if (th.getAttribute('data-sort') === 'none' || th.textContent.trim() === '') return;
      var button = document.createElement('button');
      button.type = 'button';
      button.className = 'sort-button';
      while (th.firstChild) button.appendChild(th.firstChild);
      th.appendChild(button);
      button.addEventListener('click', function () { sortBy(table, th, index); });
    });
    // A polite live region says what the table is sorted by, for readers who cannot see the arrows.
    if (!table.parentNode.querySelector('.sort-status')) {
      var status = document.createElement('p');
      status.className = 'sort-status visually-hidden';
      status.setAttribute('aria-live', 'polite');
      table.parentNode.insertBefore(status, table);
    }
  });
})();
