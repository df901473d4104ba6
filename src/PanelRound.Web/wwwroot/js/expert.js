// The expert's page: reads numbers by the page's explicit rule (the server's), echoes how each is read,
// asks before values outside the plausible range, saves drafts through the expert API, and takes the
// reader to the error summary.
(function () {
  'use strict';
  var form = document.querySelector('form[data-expert-form]');
  if (!form) return;

  // Local times next to the UTC deadline, once site.js has written them.
  document.querySelectorAll('.local-time').forEach(function (el) { el.classList.remove('d-none'); });

  // ---- Numbers: the same rule as the server's Numbers.TryParseEntry (never guess a separator). ----
  var MAX = 1e12;
  var GROUP_MARK = /[ \u00A0\u202F\u2009'\u2019]/;

  function separator() {
    var select = document.getElementById('decimals');
    return select && select.value === 'comma' ? 'comma' : 'point';
  }

  function removeGroupMarks(t) {
    if (!GROUP_MARK.test(t)) return t;
    var parts = t.split(GROUP_MARK);
    var first = parts[0].replace(/^[+\-\u2212]+/, '');
    if (first.length < 1 || first.length > 3 || !/^\d+$/.test(first)) return null;
    for (var p = 1; p < parts.length; p++) {
      var last = p === parts.length - 1;
      var digits = last ? (parts[p].match(/^\d*/)[0].length) : parts[p].length;
      if (digits !== 3 || (!last && !/^\d+$/.test(parts[p]))) return null;
    }
    return parts.join('');
  }

  // { empty: true } | { value: number, whole: '5159', fraction: '9', exponent: false } | { error: text }
  function read(text, sep) {
    var t = (text || '').trim();
    if (t === '') return { empty: true };
    var mine = sep === 'comma' ? ',' : '.';
    var other = sep === 'comma' ? '.' : ',';
    var compact = removeGroupMarks(t);
    if (compact === null) return { error: 'spaces may only separate groups of three digits' };
    if (compact.indexOf(other) >= 0) {
      return { error: 'contains \u201c' + other + '\u201d, but you chose the decimal ' + (sep === 'comma' ? 'comma' : 'point') };
    }
    compact = compact.replace(/\u2212/g, '-');
    var esc = mine === '.' ? '\\.' : ',';
    var re = new RegExp('^([+-]?)(\\d*)(?:' + esc + '(\\d*))?(?:[eE]([+-]?\\d+))?$');
    var m = re.exec(compact);
    if (!m || (m[2].length + (m[3] || '').length) === 0) return { error: 'not a number' };
    var value = parseFloat(compact.replace(mine, '.'));
    if (!isFinite(value) || Math.abs(value) > MAX) return { error: 'larger than 10^12: check the unit and the decimal mark' };
    if (value === 0 && /[1-9]/.test((m[2] + (m[3] || '')))) return { error: 'too small to store' };
    return { value: value, sign: m[1] === '-' ? '-' : '', whole: m[2].replace(/^0+(?=\d)/, '') || '0', fraction: m[3] || '', exponent: m[4] !== undefined };
  }

  function group(digits) {
    return digits.replace(/\B(?=(\d{3})+(?!\d))/g, '\u202F');
  }

  // A reading nobody can misread: thousands grouped by a narrow space, the chosen decimal mark, the unit.
  function display(r, sep, unit) {
    var mark = sep === 'comma' ? ',' : '.';
    var text;
    if (r.exponent) {
      var s = String(r.value);
      if (/e/i.test(s)) {
        text = s.replace('.', mark);
      } else {
        var parts = s.replace('-', '').split('.');
        text = (r.value < 0 ? '-' : '') + group(parts[0]) + (parts[1] ? mark + parts[1] : '');
      }
    } else {
      text = (r.value === 0 ? '' : r.sign) + group(r.whole) + (r.fraction ? mark + r.fraction : '');
    }
    return text + (unit ? (unit === '%' ? '\u00A0%' : '\u00A0' + unit) : '');
  }

  var inputs = Array.prototype.slice.call(form.querySelectorAll('input.answer-input'));

  function echo(input) {
    var out = document.getElementById(input.id + '-echo');
    if (!out) return;
    var r = read(input.value, separator());
    if (r.empty) {
      out.textContent = '';
      out.classList.remove('is-bad');
    } else if (r.error) {
      out.textContent = 'not a number: ' + r.error;
      out.classList.add('is-bad');
    } else {
      out.textContent = 'read as ' + display(r, separator(), input.dataset.unit);
      out.classList.remove('is-bad');
    }
  }

  inputs.forEach(function (input) {
    input.addEventListener('input', function () { echo(input); });
    // A value the page could not read is explained at once (e.g. after the server refused it).
    if (read(input.value, separator()).error) echo(input);
  });

  // Switching the decimal mark rewrites the numbers already typed, so none becomes unreadable.
  var decimals = document.getElementById('decimals');
  if (decimals) {
    var before = decimals.value;
    decimals.addEventListener('change', function () {
      var from = before === 'comma' ? ',' : '.';
      var to = decimals.value === 'comma' ? ',' : '.';
      inputs.forEach(function (input) {
        var r = read(input.value, before);
        if (!r.empty && !r.error && from !== to) input.value = input.value.replace(from, to);
        if (input.value.trim() !== '') echo(input);
      });
      before = decimals.value;
      // A reload keeps the choice (the page reads ?decimals=).
      if (window.history && window.URL) {
        var url = new URL(window.location.href);
        url.searchParams.set('decimals', decimals.value);
        window.history.replaceState(null, '', url.toString());
      }
      changed();
    });
  }

  // ---- The error summary: focused on load; its links move the focus to the field. ----
  var summary = document.getElementById('error-summary');
  if (summary) {
    summary.focus();
    summary.querySelectorAll('a[href^="#"]').forEach(function (a) {
      a.addEventListener('click', function (e) {
        var target = document.getElementById(a.getAttribute('href').slice(1));
        if (!target) return;
        e.preventDefault();
        target.scrollIntoView({ block: 'center' });
        target.focus({ preventScroll: true });
      });
    });
  }

  // ---- Before submitting: values outside a question's plausible range need a second look. ----
  var submitting = false;
  form.addEventListener('submit', function (e) {
    var outside = [];
    inputs.forEach(function (i) {
      var r = read(i.value, separator());
      if (r.empty || r.error) return;
      var lo = parseFloat(i.dataset.plausibleMin), hi = parseFloat(i.dataset.plausibleMax);
      if ((!isNaN(lo) && r.value < lo) || (!isNaN(hi) && r.value > hi)) outside.push(i.dataset.label + ': ' + display(r, separator(), i.dataset.unit));
    });
    if (outside.length > 0 && !window.confirm('These values are outside the plausible range:\n' + outside.join('\n') + '\n\nAre you sure?')) {
      e.preventDefault();
      return;
    }
    submitting = true;
    clearTimeout(timer);
  });

  // ---- Drafts: saved through the expert API a moment after the last change, and before leaving. ----
  var status = document.getElementById('draft-status');
  var autosave = form.dataset.autosave === 'on' && window.fetch;
  var timer = null, dirty = false, saving = false;

  function say(text) { if (status) status.textContent = text; }

  function field(name) { var el = form.elements.namedItem(name); return el && el.value !== undefined ? el : null; }

  function draftBody() {
    var answers = [];
    form.querySelectorAll('input[name$=".QuestionId"]').forEach(function (q) {
      var m = /^Answers\[(\d+)\]\.QuestionId$/.exec(q.name);
      if (!m) return;
      var prefix = 'Answers[' + m[1] + ']';
      var periods = [];
      for (var j = 0; ; j++) {
        var period = field(prefix + '.Periods[' + j + '].Period');
        if (!period) break;
        var entry = { period: period.value }, any = false;
        ['Value', 'P10', 'P50', 'P90'].forEach(function (k) {
          var input = field(prefix + '.Periods[' + j + '].' + k);
          if (!input) return;
          var r = read(input.value, separator());
          if (!r.empty && !r.error) { entry[k.toLowerCase()] = r.value; any = true; }
        });
        if (any) periods.push(entry);
      }
      if (periods.length === 0) return;
      var conf = field(prefix + '.Confidence'), rat = field(prefix + '.Rationale');
      answers.push({
        questionId: parseInt(q.value, 10),
        confidence: conf && conf.value !== '' ? parseInt(conf.value, 10) : null,
        rationale: rat && rat.value.trim() !== '' ? rat.value : null,
        periods: periods,
      });
    });
    return answers.length === 0 ? null : { draft: true, answers: answers };
  }

  function firstProblem(problem) {
    if (problem && problem.errors) {
      for (var k in problem.errors) {
        if (problem.errors[k] && problem.errors[k].length) return problem.errors[k][0];
      }
    }
    return (problem && (problem.detail || problem.title)) || 'the server refused it';
  }

  function save(leaving) {
    clearTimeout(timer);
    if (!autosave || !dirty || submitting || (saving && !leaving)) return;
    var body = draftBody();
    if (!body) { dirty = false; return; }
    dirty = false;
    saving = true;
    fetch('/api/expert/panels/' + form.dataset.panelId + '/estimates', {
      method: 'POST',
      credentials: 'same-origin',
      keepalive: !!leaving,
      headers: { 'Content-Type': 'application/json', 'X-Requested-With': 'fetch' },
      body: JSON.stringify(body),
    }).then(function (response) {
      return response.json().catch(function () { return null; }).then(function (json) {
        if (response.ok) {
          var at = json && json.at ? new Date(json.at) : new Date();
          // Short enough to sit beside the buttons on a phone; the page says above them that only submitted answers count.
          say('Draft saved ' + at.toLocaleTimeString([], { hour: 'numeric', minute: '2-digit' }));
        } else {
          say('Draft not saved: ' + firstProblem(json));
        }
      });
    }).catch(function () {
      dirty = true;
      say('Draft not saved: no connection. Your answers are still on this page.');
    }).then(function () {
      saving = false;
      if (dirty && !submitting) timer = setTimeout(save, 2000);
    });
  }

  function changed() {
    if (!autosave || submitting) return;
    dirty = true;
    clearTimeout(timer);
    timer = setTimeout(save, 2000);
  }

  if (autosave) {
    document.querySelectorAll('.autosave-note').forEach(function (el) { el.classList.remove('d-none'); });
    form.addEventListener('input', changed);
    form.addEventListener('change', function (e) { if (e.target !== decimals) changed(); });
    document.addEventListener('visibilitychange', function () { if (document.visibilityState === 'hidden') save(true); });
    window.addEventListener('pagehide', function () { save(true); });
  }
})();
