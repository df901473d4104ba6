// Shows <time class="local" datetime="..."> in the reader's own time zone.
document.querySelectorAll('time.local').forEach(function (t) {
  var d = new Date(t.getAttribute('datetime'));
  if (!isNaN(d)) {
    t.textContent = d.toLocaleString(undefined, { dateStyle: 'medium', timeStyle: 'short' }) + ' (your time)';
  }
});
// Asks before an irreversible action: <button data-confirm="Question?">.
document.querySelectorAll('[data-confirm]').forEach(function (el) {
  el.addEventListener('click', function (e) {
    if (!window.confirm(el.getAttribute('data-confirm'))) {
      e.preventDefault();
    }
  });
});
// Selects a one-time value (a link, a key) when it is clicked or focused, ready to copy.
document.querySelectorAll('input[data-select-on-focus]').forEach(function (el) {
  el.addEventListener('focus', function () { el.select(); });
  el.addEventListener('click', function () { el.select(); });
});
// Shows or hides a chart's series: <input type="checkbox" data-chart="chart id" data-chart-series="series key">.
document.querySelectorAll('input[data-chart-series]').forEach(function (box) {
  box.addEventListener('change', function () {
    var chart = document.getElementById(box.dataset.chart);
    if (!chart) return;
    chart.querySelectorAll('g[data-series]').forEach(function (g) {
      if (g.getAttribute('data-series') !== box.dataset.chartSeries) return;
      if (box.checked) g.removeAttribute('visibility'); else g.setAttribute('visibility', 'hidden');
    });
  });
});
