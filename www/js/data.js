// Data loading and column choice: the kind of data, files in (chosen, dropped or the example), a bounded preview,
// the column selects, the feature checklist, and the defaults (a label with a handful of values, trial counters
// left out of the features). Files are read and inspected in the data worker, never on the main thread.
'use strict';
(function (PD) {
  const { $, el, option } = PD;
  const S = PD.state;
  S.kind = 'table';
  S.files = {}; // slot -> { name, size, info } for 'table', 'events', 'trials', 'nwb'
  S.generation = 0; // counts loads: a record made from other files has another generation
  S.pending = {}; // the latest load asked for each slot
  S.forgotten = 0; // counts the times every file was forgotten (another kind of data chosen)
  S.features = { names: [], chosen: new Set(), disabled: new Set(), filter: '' };
  S.unitColumns = [];

  const EXAMPLES = { table: ['odours.csv'], binned: ['odours_binned.csv'], events: ['odour_spikes.csv', 'odour_trials.csv'] };
  const LAYOUTS = {
    table: { caption: 'A trial table: one row per trial, a label column, one column per neuron',
      rows: [['trial', 'odour', 'session', 'unit_01', 'unit_02', '…'], ['1', 'citral', 's1', '14', '3', '…'], ['2', 'hexanal', 's1', '9', '0', '…']] },
    binned: { caption: 'A binned table: one row per trial and time bin',
      rows: [['trial', 'time', 'odour', 'u01', 'u02', '…'], ['tr001', '-0.45', 'citral', '10', '40', '…'], ['tr001', '-0.35', 'citral', '30', '10', '…']] },
    events: { caption: 'Spike events (one row per spike) and a trial table (one row per trial)',
      rows: [['trial', 'neuron', 'time'], ['tr001', 'u01', '-0.3166'], ['tr001', 'u07', '0.0412']],
      rows2: [['trial', 'odour', 'session'], ['tr001', 'citral', 's1'], ['tr002', 'eugenol', 's1']] },
    study: { caption: 'A study table: one row per session, naming its file (and, optionally, its animal)',
      rows: [['file', 'session', 'subject'], ['m1-d1.csv', 'm1-d1', 'm1'], ['m2-d1.csv', 'm2-d1', 'm2']] },
    nwb: { caption: 'An NWB 2.x file: spike times from its units table, trials from its trials table',
      rows: [['trials table', 'start_time', 'stop_time', 'odour'], ['', '12.0', '14.0', 'citral'], ['units table', 'spike_times', 'quality', ''], ['', '[0.13, 0.52, …]', 'good', '']] },
  };

  // What one recording is: the kind of data, or for a study what each session is.
  PD.shape = () => (S.kind === 'study' ? (S.study && S.study.holds) || 'table' : S.kind);
  PD.isTime = () => PD.shape() !== 'table';
  PD.dataReady = () => (S.kind === 'events' ? !!(S.files.events && S.files.trials)
    : !!S.files[S.kind === 'nwb' ? 'nwb' : S.kind === 'study' ? 'study' : 'table']);
  // The inspected table whose columns the label and group come from.
  PD.mainInfo = () => { const f = S.files[S.kind === 'events' ? 'trials' : S.kind === 'nwb' ? 'nwb' : S.kind === 'study' ? 'study' : 'table']; return f && f.info; };

  // Show the parts of the page that belong to the chosen kind of data.
  PD.showKind = function () {
    // A study shows, besides its own parts, the column and window fields its sessions need (marked data-study).
    const shape = PD.shape();
    document.querySelectorAll('[data-kinds]').forEach((e) => {
      const kinds = e.dataset.kinds.split(' ');
      e.hidden = !(kinds.includes(S.kind) || (S.kind === 'study' && 'study' in e.dataset && kinds.includes(shape)));
    });
    $('drop-what').textContent = S.kind === 'binned'
      ? 'binned table (CSV, one row per trial and time bin)' : 'trial table (CSV, one row per trial)';
    $('start').textContent = S.kind === 'study' ? 'Run the study' : PD.isTime() ? 'Decode over time' : 'Decode';
    drawLayoutExample();
  };

  function drawLayoutExample() {
    const box = $('layout-examples');
    box.replaceChildren();
    box.hidden = Object.keys(S.files).length > 0;
    if (box.hidden) return;
    const l = LAYOUTS[S.kind];
    const table = (rows, caption) => {
      const t = el('table', null, 'example');
      t.appendChild(el('caption', caption));
      rows.forEach((r, i) => { const tr = el('tr'); r.forEach((c) => tr.appendChild(el(i === 0 ? 'th' : 'td', c, 'text'))); t.appendChild(tr); });
      const wrap = el('div', null, 'scroll'); wrap.appendChild(t); return wrap;
    };
    box.appendChild(el('p', 'Expected layout (a few rows):', 'note'));
    box.appendChild(table(l.rows, l.caption));
    if (l.rows2) box.appendChild(table(l.rows2, 'and the trial table'));
  }

  PD.setKind = function (kind) {
    if (S.run) PD.cancel();
    S.kind = kind;
    for (const r of document.querySelectorAll('input[name=kind]')) r.checked = r.value === kind;
    forgetFiles();
    PD.showKind();
    PD.emit('data');
  };

  function forgetFiles() {
    if (S.data) S.data.terminate();
    S.data = null;
    PD.stopWarm();
    S.files = {};
    S.study = null;
    S.generation++;
    S.forgotten++;
    $('data-view').hidden = true;
    $('data-status').textContent = '';
    PD.clearError('data-error');
  }

  function dataWorker() {
    if (!S.data) S.data = new PD.DataWorker(S.module);
    return S.data;
  }

  // One file into a slot: read and inspected in the data worker; the page shows a summary and a bounded preview.
  PD.loadInto = async function (slot, file) {
    PD.clearError('data-error');
    $('data-status').textContent = `Reading ${file.name} (${PD.bytes(file.size)})…`;
    // A newer load into the same slot, or forgetting every file, makes this one stale; a load into the other slot
    // (the spike events and the trial table are often chosen one right after the other) does not.
    ++S.generation;
    const token = {};
    S.pending[slot] = token;
    const forgotten = S.forgotten;
    const stale = () => S.pending[slot] !== token || S.forgotten !== forgotten;
    let answer;
    try {
      answer = await dataWorker().ask('put', { slot, file });
    } catch (e) {
      if (stale()) return;
      delete S.files[slot];
      $('data-status').textContent = '';
      PD.showError('data-error', e.message);
      if (slot !== 'events' && slot !== 'trials') $('data-view').hidden = true;
      PD.emit('data');
      return;
    }
    if (stale()) return;
    S.files[slot] = { name: file.name, size: file.size, info: answer.info, read: answer.read };
    afterLoad(slot);
  };

  function afterLoad(slot) {
    const f = S.files[slot];
    if (slot === 'nwb') nwbColumns(f);
    else if (slot === 'events') eventColumns(f.info);
    else columnsFrom(f.info);
    drawSummaries();
    const waiting = S.kind === 'events' && !(S.files.events && S.files.trials);
    $('data-status').textContent = waiting
      ? (S.files.events ? 'Now the trial table (one row per trial, with the label).' : 'Now the spike events file (one row per spike).')
      : '';
    checkSwapped();
    $('data-view').hidden = false;
    drawLayoutExample();
    PD.emit('data');
  }

  const NEURON_LIKE = /^(neuron|unit|cluster|cell)/i;
  // Spike events have a neuron column and a time column; a trial table has neither.
  const looksLikeEvents = (info) => info.headers.some((h) => NEURON_LIKE.test(h)) && info.headers.some((h) => /time/i.test(h));

  function checkSwapped() {
    const note = $('swap-note');
    if (note) note.remove();
    const { events, trials } = S.files;
    if (S.kind !== 'events' || !events || !trials) return;
    if (looksLikeEvents(trials.info) && !looksLikeEvents(events.info)) {
      const p = el('p', `The two files look swapped: ${trials.name} has a neuron and a time column like spike events, and ` +
        `${events.name} does not. `, 'warning');
      p.id = 'swap-note';
      p.appendChild(PD.button('Swap the two files', swapFiles));
      $('file-summaries').after(p);
    }
  }

  async function swapFiles() {
    const { events, trials } = S.files;
    await dataWorker().ask('swap', {});
    S.files.events = trials; S.files.trials = events;
    S.generation++;
    columnsFrom(S.files.trials.info);
    eventColumns(S.files.events.info);
    drawSummaries();
    checkSwapped();
    PD.emit('data');
  }

  function drawSummaries() {
    const box = $('file-summaries');
    box.replaceChildren();
    const previews = $('previews');
    previews.replaceChildren();
    const order = S.kind === 'events' ? ['events', 'trials'] : [S.kind === 'nwb' ? 'nwb' : 'table'];
    for (const slot of order) {
      const f = S.files[slot];
      if (!f) continue;
      const i = f.info;
      const p = el('p', null, 'file-summary');
      p.dataset.slot = slot;
      if (slot === 'nwb') {
        p.textContent = `${f.name}: NWB, ${i.units} units, ${i.spikes} spikes, ${i.trials} trials over ${i.duration.toFixed(1)} s; ` +
          `read ${(f.read / 1e6).toFixed(2)} MB of ${(f.size / 1e6).toFixed(1)} MB for the units and trials tables; SHA-256 ${i.sha256}`;
      } else if (slot === 'events') {
        p.textContent = `${f.name}: spike events, ${PD.bytes(f.size)}, ${i.delimiter}-separated; columns ${i.headers.join(', ')}`;
      } else {
        p.textContent = `${f.name}${slot === 'trials' ? ' (trial table)' : ''}: ${i.rows.toLocaleString('en')} rows × ` +
          `${i.headers.length.toLocaleString('en')} columns, ${i.delimiter}-separated` +
          `${i.decimal_comma ? ' (a comma inside a number is read as its decimal point)' : ''}; SHA-256 ${i.sha256}`;
      }
      box.appendChild(p);
      previews.appendChild(slot === 'nwb' ? nwbTable(i) : previewTable(f));
    }
  }

  function previewTable(f) {
    const i = f.info;
    const t = el('table', null, 'preview');
    t.setAttribute('aria-label', `First rows of ${f.name}`);
    const shown = i.preview.length ? i.preview[0].length : Math.min(i.headers.length, 40);
    const head = el('tr');
    i.headers.slice(0, shown).forEach((h) => head.appendChild(el('th', h, 'text')));
    if (i.headers.length > shown) head.appendChild(el('th', `… ${(i.headers.length - shown).toLocaleString('en')} more columns`, 'text'));
    t.appendChild(head);
    i.preview.forEach((row) => {
      const tr = el('tr');
      row.forEach((c) => tr.appendChild(el('td', c, 'text')));
      t.appendChild(tr);
    });
    const wrap = el('div', null, 'scroll'); wrap.tabIndex = 0; wrap.setAttribute('role', 'region');
    wrap.setAttribute('aria-label', `First rows of ${f.name}`);
    wrap.appendChild(t);
    return wrap;
  }

  function nwbTable(s) {
    const t = el('table');
    const head = el('tr'); ['table', 'column', 'kind', 'values (count)'].forEach((h) => head.appendChild(el('th', h, 'text'))); t.appendChild(head);
    const describe = (c) => (c.values.length ? c.values.map(([v, n]) => `${v} (${n})`).join(', ')
      : `${c.distinct} distinct values` + (c.range ? ` from ${c.range[0]} to ${c.range[1]}` : ''));
    [['trials', s.columns], ['units', s.unit_columns]].forEach(([table, columns]) => columns.forEach((c) => {
      const tr = el('tr');
      [table, c.name, c.numeric ? 'number' : 'text', describe(c)].forEach((v) => tr.appendChild(el('td', v, 'text')));
      t.appendChild(tr);
    }));
    const wrap = el('div', null, 'scroll'); wrap.tabIndex = 0; wrap.setAttribute('role', 'region');
    wrap.setAttribute('aria-label', 'Columns of the NWB file');
    wrap.appendChild(t);
    return wrap;
  }

  // ---------- defaults ----------
  const GROUP_LIKE = /^(session|block|day|run|date|subject|animal|mouse|rat|monkey|participant)s?([ _-]?(id|no|number))?$/i;

  // The label column a new user most likely means: a handful of distinct values (2 to 12), each on several trials
  // (3 or more), text or numbers alike (conditions coded 1–4 are common); never a column that counts trials.
  // Text before numbers (a neuron's small spike counts also take a handful of values), and a text column whose
  // handful has one or two values on fewer trials (a mistyped label) before any column of numbers: the run then
  // names the rare value, where guessing a neuron would leave the user wondering why. Among those, a column not
  // named like a session or block, then the first in the file. Exported for tests.
  PD.suggestLabel = function (info, exclude = []) {
    const cols = info.headers.map((name, i) => ({ name, i, c: info.columns[i] }))
      .filter((x) => !exclude.includes(x.name) && !x.c.counter && x.c.values);
    const frequent = (x) => x.c.values.filter(([, n]) => n >= 3).length;
    const handful = cols.filter((x) => x.c.values.length <= 12 && x.c.values.length >= 2 &&
      frequent(x) === x.c.values.length);
    const nearly = cols.filter((x) => !x.c.numeric && frequent(x) >= 2 && frequent(x) <= 12 &&
      x.c.values.length - frequent(x) <= 2);
    const named = (x) => !GROUP_LIKE.test(x.name);
    const best = handful.find((x) => !x.c.numeric && named(x)) || nearly.find(named) ||
      handful.find(named) || handful[0];
    if (best) return best.name;
    const all = info.headers.map((name, i) => ({ name, c: info.columns[i] }))
      .filter((x) => !exclude.includes(x.name) && !x.c.counter);
    const text = all.find((x) => !x.c.numeric && (!x.c.values || x.c.values.length < info.rows));
    return (text || all[0] || { name: info.headers[0] }).name;
  };

  const find = (headers, re, fallback) => headers.find((h) => re.test(h)) ?? fallback;

  // Columns a select offers: every column, or with thousands of columns only those that can be labels (text or
  // few values) plus `keep`, so that a 50 000-column file does not put 250 000 options in the page.
  function selectable(info, keep) {
    if (info.headers.length <= 1000) return info.headers;
    return info.headers.filter((h, i) => keep.includes(h) || !info.columns[i].numeric || info.columns[i].values);
  }

  function fillSelect(select, names, chosen, none) {
    select.replaceChildren();
    if (none) select.appendChild(option('', none, !chosen));
    names.forEach((c) => select.appendChild(option(c, c, c === chosen)));
  }

  // The trial table's (or binned table's) columns into the selects and the feature list.
  function columnsFrom(info) {
    const h = info.headers;
    const trialCol = find(h, /^trials?([ _-]?(id|number|no))?$/i, h[0]);
    const timeCol = PD.shape() === 'binned' ? find(h, /^(time|t|bin|bin[ _]?time)$/i, find(h, /time/i, h[1])) : null;
    const label = PD.suggestLabel(info, PD.shape() === 'binned' ? [trialCol, timeCol] : []);
    const names = selectable(info, [label, trialCol]);
    fillSelect($('label'), names, label);
    fillSelect($('group'), names, null, '(none)');
    fillSelect($('pseudo'), names.filter((c) => !info.columns[h.indexOf(c)].numeric), null, '(no: neurons recorded together)');
    fillSelect($('trial-col'), names, trialCol);
    if (PD.shape() === 'binned') fillSelect($('time-col'), h.length > 1000 ? names.concat([timeCol]) : h, timeCol);
    const align = $('align-col');
    fillSelect(align, names.filter((c) => info.columns[h.indexOf(c)].numeric && c !== trialCol), null, '(none: spike times are relative)');
    // Features: every numeric column but the label, group, trial and time; a trial counter is left out.
    const numeric = h.filter((c, i) => info.columns[i].numeric);
    const counters = h.filter((c, i) => info.columns[i].counter && info.columns[i].numeric);
    S.features.names = numeric;
    S.features.chosen = new Set(numeric.filter((c) => !counters.includes(c)));
    S.features.counters = counters;
    S.features.disabled = new Set();
    S.features.released = new Set();
    S.features.filter = '';
    $('feature-filter').value = '';
    PD.syncFeatures();
  }

  PD.columnsFrom = columnsFrom;
  PD.eventColumns = eventColumns;
  PD.nwbColumns = nwbColumns;

  function eventColumns(info) {
    const h = info.headers;
    fillSelect($('neuron-col'), h, find(h, NEURON_LIKE, h[1]));
    fillSelect($('time-col'), h, find(h, /^(time|t|spike[ _]?time)s?$/i, find(h, /time/i, h[2])));
  }

  // NWB: the trials table's columns fill the selects, the units table's the unit filter.
  function nwbColumns(f) {
    const s = f.info;
    S.unitColumns = s.unit_columns;
    const headers = s.columns.map((c) => c.name);
    const info = {
      headers, rows: s.trials,
      columns: s.columns.map((c) => ({ numeric: c.numeric, counter: false, values: c.values.length ? c.values : null })),
    };
    f.columns = info;
    const label = PD.suggestLabel(info, ['start_time', 'stop_time']);
    fillSelect($('label'), headers, label);
    fillSelect($('group'), headers, null, '(none)');
    fillSelect($('align-col'), headers.filter((c, i) => s.columns[i].numeric), headers.includes('start_time') ? 'start_time' : null,
      '(none: spike times are relative)');
    const unitCol = $('unit-col');
    unitCol.replaceChildren(option('', s.unit_columns.length ? '(every unit)' : '(every unit: the units table has no columns)', true));
    s.unit_columns.forEach((c) => unitCol.appendChild(option(c.name, c.name, false)));
    PD.fillUnitFilter();
  }

  // The comparisons a units column allows, and its values as suggestions.
  PD.fillUnitFilter = function (op, value) {
    const c = (S.unitColumns || []).find((u) => u.name === $('unit-col').value);
    const ops = c && c.numeric ? ['>=', '<=', '>', '<', '=', '!='] : ['=', '!='];
    const sel = $('unit-op');
    sel.replaceChildren();
    ops.forEach((o) => sel.appendChild(option(o, { '>=': '≥', '<=': '≤', '!=': '≠' }[o] || o, o === op)));
    const list = $('unit-values');
    list.replaceChildren();
    if (c) c.values.forEach(([v]) => list.appendChild(option(v, v, false)));
    $('unit-op').disabled = !c;
    $('unit-value').disabled = !c;
    $('unit-value').value = c ? (value ?? (c.values.length && !c.numeric ? c.values[0][0] : '')) : '';
  };

  PD.unitFilters = function () {
    const column = $('unit-col').value;
    const values = $('unit-value').value.split(',').map((v) => v.trim()).filter((v) => v !== '');
    return column && values.length ? [{ column, op: $('unit-op').value, values }] : [];
  };

  // ---------- the feature checklist ----------
  // Selection lives in S.features.chosen (a Set of names), never in the DOM, so arrow keys, focus and clicks on
  // the list can change at most the one box they act on. At most 300 boxes are drawn; the filter reaches the rest.
  const SHOWN = 300;
  function matcher(filter) {
    const f = filter.trim();
    if (!f) return () => true;
    if (f.includes('*')) {
      const re = new RegExp('^' + f.split('*').map((s) => s.replace(/[.+?^${}()|[\]\\]/g, '\\$&')).join('.*') + '$', 'i');
      return (name) => re.test(name);
    }
    const low = f.toLowerCase();
    return (name) => name.toLowerCase().includes(low);
  }
  const matching = () => S.features.names.filter(matcher(S.features.filter));

  // Columns used as label, group, trial or time cannot be features. A column that stops being one (the label
  // changed from 'speed' to 'heading') comes back unticked, with a note: it is a behavioural or design variable,
  // and silently decoding it as a neuron would be wrong.
  PD.syncFeatures = function () {
    const used = new Set([$('label').value, $('group').value, $('pseudo').value]);
    if (PD.shape() === 'binned') { used.add($('trial-col').value); used.add($('time-col').value); }
    (S.features.disabled || new Set()).forEach((c) => {
      if (c && !used.has(c) && S.features.chosen.has(c) && S.features.names.includes(c)) {
        S.features.chosen.delete(c);
        (S.features.released = S.features.released || new Set()).add(c);
      }
    });
    S.features.disabled = used;
    $('group').disabled = S.kind === 'table' && $('pseudo').value !== '';
    drawFeatures();
  };

  PD.chosenFeatures = () => S.features.names.filter((n) => S.features.chosen.has(n) && !S.features.disabled.has(n));

  function drawFeatures() {
    const list = $('features');
    list.replaceChildren();
    const names = matching();
    names.slice(0, SHOWN).forEach((name, i) => {
      const li = el('li');
      const box = el('input');
      box.type = 'checkbox';
      box.id = 'feature-' + i;
      box.checked = S.features.chosen.has(name) && !S.features.disabled.has(name);
      box.disabled = S.features.disabled.has(name);
      box.addEventListener('change', () => {
        if (box.checked) S.features.chosen.add(name); else S.features.chosen.delete(name);
        countFeatures();
        PD.emit('settings');
      });
      const label = el('label', name);
      label.htmlFor = box.id;
      li.append(box, label);
      if (S.features.disabled.has(name)) li.appendChild(el('span', ' (in use as another column)', 'help-inline'));
      list.appendChild(li);
    });
    if (names.length > SHOWN) list.appendChild(el('li', `… and ${(names.length - SHOWN).toLocaleString('en')} more that match; narrow the filter to see them (“all” and “none” act on every match).`, 'note'));
    if (!names.length) list.appendChild(el('li', 'No column matches this filter.', 'note'));
    countFeatures();
  }

  function countFeatures() {
    const n = PD.chosenFeatures().length;
    const of = S.features.names.filter((x) => !S.features.disabled.has(x)).length;
    $('feature-count').textContent = `(${n} of ${of} chosen)`;
    const counters = (S.features.counters || []).filter((c) => !S.features.chosen.has(c));
    const released = [...(S.features.released || [])].filter((c) => !S.features.chosen.has(c) && !S.features.disabled.has(c));
    const list = (cs) => cs.map((c) => `'${c}'`).join(', ');
    $('features-note').textContent = [
      counters.length ? `${list(counters)} counts 1, 2, 3, … down the file like a trial number, so it is left out of the features; tick it if it really is a measurement.` : '',
      released.length ? `${list(released)} ${released.length === 1 ? 'was' : 'were'} chosen as another column (label or group), so ${released.length === 1 ? 'it is' : 'they are'} left out of the features; tick ${released.length === 1 ? 'it' : 'them'} if ${released.length === 1 ? 'it is' : 'they are'} a measurement.` : '',
    ].filter(Boolean).join(' ');
  }

  PD.setFeatureFilter = function (text) { S.features.filter = text; drawFeatures(); };
  PD.chooseMatching = function (on) {
    matching().forEach((n) => { if (on) S.features.chosen.add(n); else S.features.chosen.delete(n); });
    drawFeatures();
    PD.emit('settings');
  };
  PD.setFeatures = function (names) { S.features.chosen = new Set(names); drawFeatures(); };

  // ---------- files in ----------
  // A sample file (the offline file carries them inside) as a File to load.
  PD.sampleFile = async (name) => new File([window.POPDECODE_EXAMPLES ? window.POPDECODE_EXAMPLES[name]
    : await (await fetch('samples/' + name)).text()], name.split('/').pop(), { type: 'text/csv' });

  // The kind's example: its files loaded, and the session column (when there is one) as the group.
  PD.loadExample = async function () {
    const files = await Promise.all(EXAMPLES[S.kind].map(PD.sampleFile));
    if (S.kind === 'events') {
      await PD.loadInto('events', files[0]);
      await PD.loadInto('trials', files[1]);
      $('t-start').value = -0.5; $('t-end').value = 1;
    } else {
      await PD.loadInto('table', files[0]);
    }
    if (PD.mainInfo() && PD.mainInfo().headers.includes('session')) {
      $('group').value = 'session';
      PD.syncFeatures();
      $('data-status').textContent = "The example sets the Group column to 'session': folds never split a session.";
    }
    PD.emit('settings');
  };

  // The example study: the study table and the sessions' trial tables it lists (invented odour sessions).
  PD.loadStudyExample = async function () {
    const table = await PD.sampleFile('study/study.csv');
    const names = (await table.text()).trim().split('\n').slice(1).map((row) => row.split(',')[0]);
    await PD.loadStudy([table, ...await Promise.all(names.map((n) => PD.sampleFile('study/' + n)))]);
  };

  // Dropped files: in spike-events mode each goes where its header says (a neuron and a time column = events).
  PD.loadDropped = async function (files) {
    if (S.kind === 'study') { await PD.loadStudy(files); return; }
    if (S.kind === 'nwb') { await PD.loadInto('nwb', files[0]); return; }
    if (S.kind !== 'events') { await PD.loadInto('table', files[0]); return; }
    for (const f of files.slice(0, 2)) {
      let info = null;
      try { info = await dataWorker().ask('peek', { file: f }); } catch (_) { info = null; }
      await PD.loadInto(info && looksLikeEvents(info) ? 'events' : 'trials', f);
    }
  };
}(window.PD));
