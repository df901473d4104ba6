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
// Copies a one-time value: <button type="button" data-copy-target="input id">. Uses the clipboard where the
// browser allows it, else selects the text (and tries the older copy command); says so on the button and to
// screen readers through the page's [data-copy-status] live region.
document.querySelectorAll('[data-copy-target]').forEach(function (btn) {
  var label = btn.textContent;
  btn.addEventListener('click', function () {
    var input = document.getElementById(btn.getAttribute('data-copy-target'));
    if (!input) return;
    var status = document.querySelector('[data-copy-status]');
    function done(ok) {
      var text = ok ? 'Copied' : 'Selected: copy it now';
      btn.textContent = ok ? 'Copied' : 'Selected';
      if (status) {
        status.textContent = '';
        window.setTimeout(function () { status.textContent = text; }, 50);
      }
      window.setTimeout(function () { btn.textContent = label; }, 2500);
    }
    function fallback() {
      input.focus();
      input.select();
      var ok = false;
      try { ok = document.execCommand('copy'); } catch (e) { ok = false; }
      done(ok);
    }
    if (navigator.clipboard && window.isSecureContext) {
      navigator.clipboard.writeText(input.value).then(function () { done(true); }, fallback);
    } else {
      fallback();
    }
  });
});
