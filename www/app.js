// The page: reads the file locally, draws the form, runs tasks on a pool of workers and shows the results.
// Everything taken from the user's file is inserted with textContent or as an <img> of core-escaped SVG, never as
// HTML. The page never sends anything anywhere.
/* global wasm_bindgen */
'use strict';
(function () {
  const $ = (id) => document.getElementById(id);
  const STORE = 'popdecode.settings';
  // kind: 'table' (one row per trial), 'binned' (one row per trial × bin) or 'events' (spike events + trial table).
  // file/info: the trial table or binned table; events/eventsInfo: the spike events file (events only).
  const state = {
    kind: 'table', module: null, file: null, info: null, events: null, eventsInfo: null,
    pool: [], run: null, result: null, lastRecipe: null, neurons: null, reader: null, unitColumns: [],
  };
  const WITH_C = ['linear-svm', 'logistic', 'rbf-svm'];
  const EXAMPLES = { table: ['odours.csv'], binned: ['odours_binned.csv'], events: ['odour_spikes.csv', 'odour_trials.csv'] };

  // ---------- start-up ----------
  async function compileWasm() {
    if (window.POPDECODE_WASM_BASE64) {
      const bin = atob(window.POPDECODE_WASM_BASE64);
      const bytes = new Uint8Array(bin.length);
      for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
      return WebAssembly.compile(bytes);
    }
    const response = await fetch('pkg/popdecode_bg.wasm');
    return WebAssembly.compile(await response.arrayBuffer());
  }

  async function init() {
    try {
      state.module = await compileWasm();
      await wasm_bindgen({ module_or_path: state.module });
      wasm_bindgen.start();
      $('version').textContent = wasm_bindgen.version();
    } catch (e) {
      showError('data-error', 'The decoding core could not start in this browser: ' + e);
      return;
    }
    restoreSettings();
    wire();
    showKind();
    $('workers-info').textContent = poolSize() + ' worker' + (poolSize() === 1 ? '' : 's') + ' on this computer';
  }

  function poolSize() {
    const asked = Number(new URLSearchParams(location.search).get('workers'));
    if (Number.isInteger(asked) && asked > 0) return Math.min(asked, 32);
    return Math.max(1, Math.min(navigator.hardwareConcurrency || 2, 16));
  }

  // ---------- helpers ----------
  function el(tag, text, cls) {
    const e = document.createElement(tag);
    if (text !== undefined && text !== null) e.textContent = String(text);
    if (cls) e.className = cls;
    return e;
  }
  function showError(id, message) { const box = $(id); box.textContent = message; box.hidden = false; }
  function clearError(id) { const box = $(id); box.textContent = ''; box.hidden = true; }
  function pct(v) { return (100 * v).toFixed(1) + ' %'; }
  function download(name, text, type) {
    const url = URL.createObjectURL(new Blob([text], { type }));
    const a = el('a'); a.href = url; a.download = name; document.body.appendChild(a); a.click(); a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 1000);
  }
  function baseName() { return (state.file ? state.file.name : 'data').replace(/\.[^.]*$/, ''); }

  // ---------- data ----------
  const isTime = () => state.kind !== 'table';
  const ready = () => (state.kind === 'events' ? !!(state.file && state.events) : !!state.file);

  // Show the parts of the page that belong to the chosen kind of data.
  function showKind() {
    document.querySelectorAll('[data-kinds]').forEach((e) => { e.hidden = !e.dataset.kinds.split(' ').includes(state.kind); });
    $('drop-what').textContent = state.kind === 'binned'
      ? 'binned table (CSV, one row per trial and time bin)' : 'trial table (CSV, one row per trial)';
    $('start').textContent = isTime() ? 'Decode over time' : 'Decode';
  }

  function setKind(kind) {
    if (state.run) cancel();
    if (state.reader) { state.reader.terminate(); state.reader = null; $('nwb-status').textContent = ''; }
    state.kind = kind;
    for (const r of document.querySelectorAll('input[name=kind]')) r.checked = r.value === kind;
    state.file = null; state.info = null; state.events = null; state.eventsInfo = null; state.result = null;
    $('data-view').hidden = true;
    $('results').hidden = true;
    $('compare').hidden = true;
    $('neurons').hidden = true;
    $('start').disabled = true;
    clearError('data-error');
    showKind();
  }

  // The files a time course reads, as the core's bridge takes them: (name, bytes) twice; the second is empty for a
  // binned table.
  function fileArgs() {
    return state.kind === 'events'
      ? [state.events.name, state.events.bytes, state.file.name, state.file.bytes]
      : [state.file.name, state.file.bytes, '', new Uint8Array(0)];
  }

  // The first part of a file, cut at a line end: enough to show the columns of a spike events file of any size.
  function head(bytes) {
    const LIMIT = 256 * 1024;
    if (bytes.length <= LIMIT) return bytes;
    const cut = bytes.lastIndexOf(10, LIMIT);
    return bytes.subarray(0, cut > 0 ? cut + 1 : LIMIT);
  }

  async function loadFile(name, bytes) {
    clearError('data-error');
    $('data-view').hidden = true;
    $('start').disabled = true;
    let info;
    try {
      info = JSON.parse(wasm_bindgen.inspect(name, bytes));
    } catch (e) {
      state.file = null;
      showError('data-error', String(e));
      return;
    }
    state.file = { name, bytes };
    state.info = info;
    $('file-summary').textContent = `${name}: ${info.rows} rows × ${info.headers.length} columns, ` +
      `${info.delimiter}-separated${info.decimal_comma ? ' with decimal commas' : ''}; SHA-256 ${info.sha256.slice(0, 16)}…`;
    drawPreview($('preview'), info);
    fillColumns(info);
    showData();
  }

  async function loadEvents(name, bytes) {
    clearError('data-error');
    let info;
    try {
      info = JSON.parse(wasm_bindgen.inspect(name, head(bytes)));
    } catch (e) {
      state.events = null;
      showError('data-error', String(e));
      return;
    }
    state.events = { name, bytes };
    state.eventsInfo = info;
    $('events-summary').textContent = `${name}: spike events, ${(bytes.length / 1e6).toFixed(1)} MB, ` +
      `${info.delimiter}-separated; columns ${info.headers.join(', ')}`;
    drawPreview($('events-preview'), info);
    fillEventColumns(info);
    showData();
  }

  // An NWB file is read in a worker, lazily (only its units and trials tables, and a chunked pass for its
  // SHA-256), into the extract that the page and every decoding worker then use: the file itself is never held
  // in memory, however much raw data it carries.
  function readNwb(file) {
    clearError('data-error');
    $('data-view').hidden = true;
    $('start').disabled = true;
    if (state.reader) state.reader.terminate();
    const reader = makeWorker();
    state.reader = reader;
    $('nwb-status').textContent = `Reading ${file.name} (${(file.size / 1e6).toFixed(1)} MB)…`;
    const done = () => { reader.terminate(); if (state.reader === reader) state.reader = null; $('nwb-status').textContent = ''; };
    reader.onmessage = (ev) => {
      if (state.reader !== reader) return;
      done();
      if (ev.data.type === 'extracted') showNwb(file.name, ev.data.bytes, ev.data.read, file.size);
      else { state.file = null; showError('data-error', ev.data.message); }
    };
    reader.onerror = (ev) => { if (state.reader === reader) { done(); showError('data-error', `${file.name}: ${ev.message || 'the file could not be read'}`); } };
    reader.postMessage({ type: 'extract', module: state.module, file });
  }

  // The NWB summary stands in for a table's preview; the trials table's columns fill the selects, the units
  // table's the unit filter.
  function showNwb(name, bytes, read, size) {
    let s;
    try { s = JSON.parse(wasm_bindgen.inspect_nwb(name, bytes)); } catch (e) {
      state.file = null; showError('data-error', String(e)); $('data-view').hidden = true; return;
    }
    state.file = { name, bytes };
    state.unitColumns = s.unit_columns;
    const headers = s.columns.map((c) => c.name);
    const numeric = s.columns.map((c) => c.numeric);
    const label = s.columns.find((c) => !c.numeric && c.distinct >= 2 && c.distinct <= 20)
      || s.columns.find((c) => c.distinct >= 2 && c.distinct <= 20);
    state.info = { headers, numeric, suggested_label: label ? label.name : headers[0] };
    $('file-summary').textContent = `${name}: NWB, ${s.units} units, ${s.spikes} spikes, ${s.trials} trials over ${s.duration.toFixed(1)} s; ` +
      `SHA-256 ${s.sha256.slice(0, 16)}…; read ${(read / 1e6).toFixed(2)} MB of ${(size / 1e6).toFixed(1)} MB for the units and trials tables`;
    const t = $('preview'); t.replaceChildren();
    const head = el('tr'); ['table', 'column', 'kind', 'values (count)'].forEach((h) => head.appendChild(el('th', h, 'text'))); t.appendChild(head);
    const describe = (c) => (c.values.length ? c.values.map(([v, n]) => `${v} (${n})`).join(', ')
      : `${c.distinct} distinct values` + (c.range ? ` from ${c.range[0]} to ${c.range[1]}` : ''));
    [['trials', s.columns], ['units', s.unit_columns]].forEach(([table, columns]) => columns.forEach((c) => {
      const tr = el('tr');
      [table, c.name, c.numeric ? 'number' : 'text', describe(c)].forEach((v) => tr.appendChild(el('td', v, 'text')));
      t.appendChild(tr);
    }));
    fillColumns(state.info);
    $('align-col').value = headers.includes('start_time') ? 'start_time' : '';
    const unitCol = $('unit-col');
    unitCol.replaceChildren(option('', s.unit_columns.length ? '(every unit)' : '(every unit: the units table has no columns)', true));
    s.unit_columns.forEach((c) => unitCol.appendChild(option(c.name, c.name, false)));
    fillUnitFilter();
    showData();
  }

  // The comparisons a units column allows, and its values as suggestions.
  function fillUnitFilter(op, value) {
    const c = (state.unitColumns || []).find((u) => u.name === $('unit-col').value);
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
  }

  function unitFilters() {
    const column = $('unit-col').value;
    const values = $('unit-value').value.split(',').map((v) => v.trim()).filter((v) => v !== '');
    return column && values.length ? [{ column, op: $('unit-op').value, values }] : [];
  }

  // In events mode a dropped file is the events file when its header has a neuron-like column.
  async function loadDropped(files) {
    for (const f of files) {
      if (state.kind === 'nwb') { readNwb(f); return; }
      const bytes = new Uint8Array(await f.arrayBuffer());
      if (state.kind !== 'events') { await loadFile(f.name, bytes); return; }
      let headers = [];
      try { headers = JSON.parse(wasm_bindgen.inspect(f.name, head(bytes))).headers; } catch (_) { headers = []; }
      if (headers.some((h) => /^(neuron|unit|cluster|cell)/i.test(h))) await loadEvents(f.name, bytes);
      else await loadFile(f.name, bytes);
    }
  }

  function showData() {
    $('data-view').hidden = !(state.file || state.events);
    if (state.kind === 'events' && !state.file) $('file-summary').textContent = 'Now the trial table (one row per trial, with the label).';
    if (state.kind === 'events' && !state.events) $('file-summary').textContent += ' Now the spike events file.';
    refreshPlan();
  }

  function drawPreview(t, info) {
    t.replaceChildren();
    const head = el('tr');
    info.headers.forEach((h) => head.appendChild(el('th', h, 'text')));
    t.appendChild(head);
    info.preview.forEach((row) => {
      const tr = el('tr');
      row.forEach((c) => tr.appendChild(el('td', c, 'text')));
      t.appendChild(tr);
    });
  }

  function option(value, text, selected) {
    const o = el('option', text);
    o.value = value;
    o.selected = !!selected;
    return o;
  }

  const find = (headers, re, fallback) => headers.find((h) => re.test(h)) ?? fallback;

  function fillColumns(info) {
    const h = info.headers;
    const label = $('label'); const group = $('group'); const feats = $('features');
    const trial = $('trial-col'); const align = $('align-col');
    [label, group, feats, trial, align].forEach((e) => e.replaceChildren());
    const trialCol = find(h, /^trials?([ _-]?(id|number|no))?$/i, h[0]);
    h.forEach((c) => trial.appendChild(option(c, c, c === trialCol)));
    let suggested = info.suggested_label;
    if (state.kind === 'binned') {
      const timeCol = find(h, /^(time|t|bin|bin[ _]?time)$/i, find(h, /time/i, h[1]));
      fillSelect($('time-col'), h, timeCol);
      suggested = h.find((c, i) => !info.numeric[i] && c !== trialCol && c !== timeCol) ?? suggested;
    }
    h.forEach((c) => label.appendChild(option(c, c, c === suggested)));
    group.appendChild(option('', '(none)', true));
    h.forEach((c) => group.appendChild(option(c, c, false)));
    const pseudoSel = $('pseudo');
    pseudoSel.replaceChildren(option('', '(no: neurons recorded together)', true));
    h.forEach((c, i) => { if (!info.numeric[i]) pseudoSel.appendChild(option(c, c, false)); });
    align.appendChild(option('', '(none: spike times are relative)', true));
    h.forEach((c, i) => { if (info.numeric[i] && c !== trialCol) align.appendChild(option(c, c, false)); });
    h.forEach((c, i) => { if (info.numeric[i]) feats.appendChild(option(c, c, true)); });
    syncFeatureOptions();
  }

  function fillSelect(select, headers, chosen) {
    select.replaceChildren();
    headers.forEach((c) => select.appendChild(option(c, c, c === chosen)));
  }

  function fillEventColumns(info) {
    const h = info.headers;
    fillSelect($('neuron-col'), h, find(h, /^(neuron|unit|cluster|cell)/i, h[1]));
    fillSelect($('time-col'), h, find(h, /^(time|t|spike[ _]?time)s?$/i, find(h, /time/i, h[2])));
  }

  // A column chosen as label, group, trial or time cannot also be a feature.
  function syncFeatureOptions() {
    $('group').disabled = state.kind === 'table' && $('pseudo').value !== '';
    const used = [$('label').value, $('group').value, $('pseudo').value];
    if (state.kind === 'binned') used.push($('trial-col').value, $('time-col').value);
    for (const o of $('features').options) {
      const was = o.disabled;
      o.disabled = used.includes(o.value);
      if (o.disabled) o.selected = false; else if (was) o.selected = true;
    }
  }

  // ---------- recipe ----------
  function readRecipe() {
    const recipe = JSON.parse(wasm_bindgen.default_recipe($('label').value || 'label'));
    recipe.columns.group = $('group').value || null;
    if (state.kind === 'table' && $('pseudo').value) {
      recipe.columns.pseudo = $('pseudo').value;
      recipe.columns.group = null;
    }
    if (state.kind === 'table' || state.kind === 'binned') {
      const opts = [...$('features').options];
      const feats = opts.filter((o) => o.selected).map((o) => o.value);
      const enabled = opts.filter((o) => !o.disabled).map((o) => o.value);
      // null = "every other column", which the core reads as every numeric one for a trial table and every
      // remaining one for a binned table: say so only when that is exactly the selection.
      const others = state.info ? state.info.headers.filter((h) => !['trial-col', 'time-col', 'label', 'group']
        .some((id) => (state.kind === 'binned' || !id.endsWith('-col')) && $(id).value === h)) : [];
      const allNumeric = state.kind === 'table' || others.every((h) => enabled.includes(h));
      recipe.columns.features = feats.length === enabled.length && allNumeric ? null : feats;
    }
    recipe.columns.drop_missing = state.kind === 'table' && $('drop-missing').checked;
    recipe.classifier = $('classifier').value;
    recipe.c = Number($('c').value);
    recipe.tune = WITH_C.includes(recipe.classifier) && $('tune').checked;
    const folds = $('folds').value.trim().toLowerCase();
    recipe.folds = folds === 'loo' ? 'loo' : Number(folds);
    recipe.repeats = Number($('repeats').value);
    recipe.balance = $('balance').checked;
    recipe.shuffles = Number($('shuffles').value);
    recipe.shuffle_repeats = $('shuffle-repeats').value === '' ? null : Number($('shuffle-repeats').value);
    recipe.seed = Number($('seed').value);
    if (state.kind === 'binned') {
      recipe.time = { input: { kind: 'binned', trial: $('trial-col').value, time: $('time-col').value } };
    } else if (state.kind === 'nwb') {
      recipe.time = {
        input: {
          kind: 'nwb', align: $('align-col').value || null, width: Number($('width').value), step: Number($('step').value),
          start: Number($('t-start').value), end: Number($('t-end').value), units: unitFilters(),
        },
      };
    } else if (state.kind === 'events') {
      recipe.time = {
        input: {
          kind: 'events', trial: $('trial-col').value, neuron: $('neuron-col').value, time: $('time-col').value,
          align: $('align-col').value || null, width: Number($('width').value), step: Number($('step').value),
          start: Number($('t-start').value), end: Number($('t-end').value),
        },
      };
    }
    if (recipe.time) {
      recipe.time.generalize = $('generalize').checked;
      recipe.time.alpha = Number($('alpha').value);
    }
    return recipe;
  }

  function applyRecipe(r) {
    const kind = r.time ? r.time.input.kind : 'table';
    if (kind !== state.kind) {
      setKind(kind);
      $('recipe-status').textContent = 'This recipe is for another kind of data: load the data now.';
    }
    $('classifier').value = r.classifier;
    $('c').value = r.c;
    $('tune').checked = !!r.tune;
    $('folds').value = r.folds;
    $('repeats').value = r.repeats;
    $('balance').checked = r.balance;
    $('shuffles').value = r.shuffles;
    $('shuffle-repeats').value = r.shuffle_repeats === null || r.shuffle_repeats === undefined ? '' : r.shuffle_repeats;
    $('seed').value = r.seed;
    $('drop-missing').checked = !!r.columns.drop_missing;
    if (r.time) {
      $('generalize').checked = !!r.time.generalize;
      $('alpha').value = r.time.alpha;
      const t = r.time.input;
      if (t.kind === 'events' || t.kind === 'nwb') {
        $('width').value = t.width; $('step').value = t.step; $('t-start').value = t.start; $('t-end').value = t.end;
      }
    }
    const pick = (id, value, headers) => { if (value && headers && headers.includes(value)) $(id).value = value; };
    if (state.info) {
      const h = state.info.headers;
      pick('label', r.columns.label, h);
      $('group').value = r.columns.group && h.includes(r.columns.group) ? r.columns.group : '';
      $('pseudo').value = r.columns.pseudo && h.includes(r.columns.pseudo) ? r.columns.pseudo : '';
      if (r.time) {
        pick('trial-col', r.time.input.trial, h);
        if (r.time.input.kind === 'binned') pick('time-col', r.time.input.time, h);
        if (r.time.input.kind === 'events') $('align-col').value = r.time.input.align && h.includes(r.time.input.align) ? r.time.input.align : '';
        if (r.time.input.kind === 'nwb') {
          $('align-col').value = h.includes(r.time.input.align || 'start_time') ? r.time.input.align || 'start_time' : '';
          applyUnitFilters(r.time.input.units || []);
        }
      }
      syncFeatureOptions();
      if (Array.isArray(r.columns.features)) {
        for (const o of $('features').options) o.selected = !o.disabled && r.columns.features.includes(o.value);
      }
    }
    if (state.eventsInfo && r.time && r.time.input.kind === 'events') {
      pick('neuron-col', r.time.input.neuron, state.eventsInfo.headers);
      pick('time-col', r.time.input.time, state.eventsInfo.headers);
    }
  }

  // The page shows one unit filter; a recipe with more is refused here rather than run with fewer.
  function applyUnitFilters(filters) {
    const f = filters[0];
    const known = (state.unitColumns || []).some((u) => f && u.name === f.column);
    $('unit-col').value = known ? f.column : '';
    fillUnitFilter(known ? f.op : undefined, known ? f.values.join(',') : undefined);
    if (filters.length > 1 || (f && !known)) {
      $('recipe-status').textContent = filters.length > 1
        ? 'This recipe keeps units by several filters; the page applies one: run it from the command line (--units, once per filter).'
        : `This recipe keeps units by '${f.column}', which this file's units table does not have.`;
    }
  }

  const SETTING_IDS = ['classifier', 'c', 'tune', 'folds', 'repeats', 'balance', 'shuffles', 'shuffle-repeats', 'seed', 'drop-missing',
    'width', 'step', 't-start', 't-end', 'generalize', 'alpha'];
  function saveSettings() {
    const s = {};
    SETTING_IDS.forEach((id) => { const e = $(id); s[id] = e.type === 'checkbox' ? e.checked : e.value; });
    try { localStorage.setItem(STORE, JSON.stringify(s)); } catch (_) { /* storage may be off: fine */ }
  }
  function restoreSettings() {
    let s = null;
    try { s = JSON.parse(localStorage.getItem(STORE) || 'null'); } catch (_) { s = null; }
    if (!s) return;
    SETTING_IDS.forEach((id) => {
      const e = $(id);
      if (!(id in s)) return;
      if (e.type === 'checkbox') e.checked = !!s[id]; else e.value = s[id];
    });
  }

  // ---------- plan (checks and class counts) ----------
  function refreshPlan() {
    syncFeatureOptions();
    $('c').disabled = !WITH_C.includes($('classifier').value) || $('tune').checked;
    $('tune').disabled = !WITH_C.includes($('classifier').value);
    saveSettings();
    const box = $('classes');
    box.replaceChildren();
    if (!ready()) { $('start').disabled = true; return; }
    clearError('data-error');
    let plan;
    try {
      const recipe = readRecipe();
      $('cli-line').textContent = cliLine(recipe);
      plan = prepare(recipe);
    } catch (e) {
      showError('data-error', String(e));
      $('start').disabled = true;
      return;
    }
    const folds = readRecipe().folds;
    const max = Math.max(...plan.class_counts);
    const min = Math.min(...plan.class_counts);
    box.appendChild(el('h3', `Trials per class (${plan.trials} trials, ${plan.features} ${isTime() ? 'neurons' : 'features'}` +
      (isTime() ? `, ${plan.windows.length} windows from ${plan.windows[0].time} s to ${plan.windows[plan.windows.length - 1].time} s` : '') +
      (['events', 'nwb'].includes(state.kind) ? `, ${plan.spikes_total} spikes of which ${plan.spikes_outside} fall outside every window` : '') + ')'));
    const bars = el('div', null, 'bars');
    plan.classes.forEach((c, i) => {
      const n = plan.class_counts[i];
      const low = typeof folds === 'number' && n < folds;
      bars.appendChild(el('span', c));
      const bar = el('div', null, 'bar' + (low ? ' low' : ''));
      bar.style.width = (100 * n / max) + '%';
      bars.appendChild(bar);
      bars.appendChild(el('span', n + (low ? ' (fewer than folds)' : '')));
    });
    box.appendChild(bars);
    const notes = el('ul', null, 'warnings');
    if (min < max) {
      notes.appendChild(el('li', $('balance').checked
        ? `Classes are unbalanced (${min} to ${max} trials): every repeat undersamples each class to ${min}.`
        : `Classes are unbalanced (${min} to ${max} trials) and balancing is off: balanced accuracy is the headline.`));
    }
    plan.warnings.forEach((w) => notes.appendChild(el('li', w)));
    box.appendChild(notes);
    $('start').disabled = state.run !== null;
  }

  function prepare(recipe) {
    const text = JSON.stringify(recipe);
    return JSON.parse(wasm_bindgen.prepare(isTime() ? 'time' : 'table', ...fileArgs(), text, ''));
  }

  function cliLine(r) {
    const q = (s) => (/^[\w.,-]+$/.test(String(s)) ? String(s) : `'${String(s).replace(/'/g, "'\\''")}'`);
    const parts = [];
    const t = r.time && r.time.input;
    if (!t) parts.push('popdecode decode', q(state.file ? state.file.name : 'FILE'));
    else if (t.kind === 'binned') parts.push('popdecode timecourse', q(state.file.name), '--trial', q(t.trial), '--time', q(t.time));
    else if (t.kind === 'nwb') {
      parts.push('popdecode timecourse --nwb', q(state.file ? state.file.name : 'FILE.nwb'));
      if (t.align) parts.push('--align', q(t.align));
      parts.push('--width', t.width, '--step', t.step, '--start', t.start, '--end', t.end);
      (t.units || []).forEach((f) => parts.push('--units', q(`${f.column}${f.op}${f.values.join(',')}`)));
    }
    else {
      parts.push('popdecode timecourse --events', q(state.events ? state.events.name : 'EVENTS'), '--trials', q(state.file ? state.file.name : 'TRIALS'),
        '--trial', q(t.trial), '--neuron', q(t.neuron), '--time', q(t.time));
      if (t.align) parts.push('--align', q(t.align));
      parts.push('--width', t.width, '--step', t.step, '--start', t.start, '--end', t.end);
    }
    parts.push('--label', q(r.columns.label));
    if (r.columns.group) parts.push('--group', q(r.columns.group));
    if (r.columns.pseudo) parts.push('--pseudo', q(r.columns.pseudo));
    if (r.columns.features) parts.push('--features', q(r.columns.features.join(',')));
    parts.push('--classifier', r.classifier);
    if (r.tune) parts.push('--tune');
    else if (WITH_C.includes(r.classifier)) parts.push('--c', r.c);
    parts.push('--folds', r.folds, '--repeats', r.repeats, '--shuffles', r.shuffles);
    if (r.shuffle_repeats !== null) parts.push('--shuffle-repeats', r.shuffle_repeats);
    if (!r.balance) parts.push('--no-balance');
    if (r.columns.drop_missing) parts.push('--drop-missing');
    parts.push('--seed', r.seed);
    if (r.time && r.time.generalize) parts.push('--generalize');
    if (r.time && r.time.alpha !== 0.05) parts.push('--alpha', r.time.alpha);
    return parts.join(' ');
  }

  // ---------- run on a worker pool ----------
  function makeWorker() {
    if (window.POPDECODE_OFFLINE) {
      const src = document.getElementById('glue-src').textContent + '\n' + document.getElementById('worker-src').textContent;
      return new Worker(URL.createObjectURL(new Blob([src], { type: 'text/javascript' })));
    }
    return new Worker('worker.js');
  }

  function stopPool() {
    state.pool.forEach((w) => w.terminate());
    state.pool = [];
  }

  function start() {
    if (!ready() || state.run) return;
    clearError('run-error');
    let recipe, plan;
    try {
      recipe = readRecipe();
      plan = prepare(recipe);
    } catch (e) { showError('run-error', String(e)); return; }
    state.lastRecipe = recipe;
    launch(recipe, plan, (result) => {
      state.result = result;
      if (isTime()) showTimeResults(result); else showResults(result);
    });
  }

  // Which analysis a run is (a trial table, a time course, or the neuron analyses) and its options; the core's
  // bridge has one prepare / run / finish shape for all of them.
  function mode(draws) {
    const how = draws !== undefined ? { name: 'neurons', options: JSON.stringify({ draws }) }
      : { name: isTime() ? 'time' : 'table', options: '' };
    how.finish = (recipe, outcomes) => wasm_bindgen.finish(how.name, ...fileArgs(), recipe, how.options, outcomes);
    return how;
  }

  // Run a prepared recipe on a fresh worker pool; `done` receives the finished result.
  function launch(recipe, plan, done, how = mode()) {
    const queue = plan.tasks.map((task, i) => ({ task, fits: plan.fits[i] }));
    const run = {
      recipe: JSON.stringify(recipe), queue, next: 0, outcomes: [], fitsDone: 0, done, how,
      fitsTotal: plan.fits.reduce((a, b) => a + b, 0), started: performance.now(), failed: false,
    };
    state.run = run;
    $('start').disabled = true; $('cancel').disabled = false;
    $('progress').hidden = false; $('progress').value = 0;
    $('progress-text').textContent = 'Starting workers…';
    const n = Math.min(poolSize(), queue.length);
    for (let w = 0; w < n; w++) {
      const worker = makeWorker();
      state.pool.push(worker);
      worker.onmessage = (ev) => onWorkerMessage(run, worker, ev.data);
      worker.onerror = (ev) => fail(run, 'a worker stopped: ' + (ev.message || 'unknown error'));
      worker.postMessage({ type: 'init', module: state.module, kind: how.name, options: how.options, files: fileArgs(), recipe: run.recipe });
    }
  }

  function give(run, worker) {
    if (run.next >= run.queue.length) return;
    const id = run.next++;
    worker.postMessage({ type: 'task', id, task: run.queue[id].task });
  }

  function onWorkerMessage(run, worker, msg) {
    if (run !== state.run) return;
    if (msg.type === 'ready') { give(run, worker); return; }
    if (msg.type === 'error') { fail(run, msg.message); return; }
    if (msg.type === 'done') {
      run.outcomes.push(msg.outcome);
      run.fitsDone += run.queue[msg.id].fits;
      progress(run);
      if (run.outcomes.length === run.queue.length) finish(run); else give(run, worker);
    }
  }

  function progress(run) {
    const frac = run.fitsDone / run.fitsTotal;
    $('progress').value = frac;
    const elapsed = (performance.now() - run.started) / 1000;
    const left = frac > 0 ? elapsed * (1 - frac) / frac : NaN;
    $('progress-text').textContent = `${run.fitsDone} of ${run.fitsTotal} fits (${Math.round(100 * frac)} %), ` +
      `${elapsed.toFixed(1)} s elapsed` + (Number.isFinite(left) ? `, about ${Math.ceil(left)} s left` : '');
  }

  function endRun() {
    stopPool();
    state.run = null;
    $('cancel').disabled = true;
    $('start').disabled = !ready();
  }

  function fail(run, message) {
    if (run !== state.run) return;
    endRun();
    $('progress').hidden = true;
    $('progress-text').textContent = '';
    showError('run-error', message);
  }

  function cancel() {
    if (!state.run) return;
    endRun();
    $('progress').hidden = true;
    $('progress-text').textContent = 'Cancelled. Nothing was kept from the stopped run.';
  }

  function finish(run) {
    endRun();
    let result;
    try {
      result = JSON.parse(run.how.finish(run.recipe, '[' + run.outcomes.join(',') + ']'));
    } catch (e) { showError('run-error', String(e)); return; }
    const seconds = ((performance.now() - run.started) / 1000).toFixed(1);
    $('progress-text').textContent = `Done: ${run.fitsTotal} fits in ${seconds} s on ${Math.min(poolSize(), run.queue.length)} workers.`;
    run.done(result);
  }

  // ---------- what each neuron contributes ----------
  function neurons() {
    if (!ready() || state.run || state.kind !== 'table') return;
    clearError('run-error');
    let recipe, plan;
    const draws = Math.max(1, Number($('draws').value) || 10);
    try {
      recipe = readRecipe();
      recipe.shuffles = 0;
      plan = JSON.parse(wasm_bindgen.prepare('neurons', ...fileArgs(), JSON.stringify(recipe), JSON.stringify({ draws })));
    } catch (e) { showError('run-error', String(e)); return; }
    launch(recipe, plan, (result) => {
      state.neurons = result;
      $('neurons').hidden = false;
      svgImage('fig-dropping', result.plots.dropping, 'dropping');
      svgImage('fig-single', result.plots.single, 'single');
      svgImage('fig-weights', result.plots.weights, 'weights');
      $('neurons-note').hidden = !result.plots.weights;
      $('neurons').scrollIntoView({ behavior: 'smooth', block: 'start' });
    }, mode(draws));
  }

  // ---------- exploratory comparison of decoders ----------
  const DECODERS = ['linear-svm', 'shrinkage-lda', 'logistic', 'gaussian-nb', 'poisson-nb', 'nearest-mean', 'rbf-svm'];

  // Every decoder on the current settings, one after the other, without shuffles and with at most 20 repeats.
  function compare() {
    if (!ready() || state.run) return;
    clearError('run-error');
    let base;
    try { base = readRecipe(); } catch (e) { showError('run-error', String(e)); return; }
    base.shuffles = 0;
    base.repeats = Math.min(base.repeats, 20);
    base.tune = false;
    const rows = [];
    const table = $('compare-table');
    const next = (i) => {
      if (i === DECODERS.length) { drawComparison(table, rows); return; }
      const recipe = { ...base, classifier: DECODERS[i] };
      let plan;
      try { plan = prepare(recipe); } catch (e) {
        rows.push({ name: DECODERS[i], error: String(e) });
        next(i + 1);
        return;
      }
      $('progress-text').textContent = `Comparing: ${DECODERS[i]} (${i + 1} of ${DECODERS.length})…`;
      launch(recipe, plan, (result) => {
        const r = result.report;
        const time = isTime();
        const curve = time ? r.windows.map((w) => (r.design.headline === 'accuracy' ? w.accuracy.mean : w.balanced_accuracy.mean)) : null;
        const h = time ? null : (r.design.headline === 'accuracy' ? r.summary.accuracy : r.summary.balanced_accuracy);
        rows.push(time
          ? { name: DECODERS[i], mean: Math.max(...curve), label: `peak at ${r.windows[curve.indexOf(Math.max(...curve))].time} s` }
          : { name: DECODERS[i], mean: h.mean, sd: h.sd, label: '' });
        next(i + 1);
      });
    };
    $('compare').hidden = false;
    table.replaceChildren();
    next(0);
  }

  function drawComparison(table, rows) {
    const head = el('tr');
    ['decoder', isTime() ? 'peak score' : 'mean', isTime() ? '' : 'SD', ''].forEach((h) => head.appendChild(el('th', h, 'text')));
    table.appendChild(head);
    rows.forEach((r) => {
      const tr = el('tr');
      tr.appendChild(el('td', r.name, 'text'));
      if (r.error) {
        const td = el('td', 'not run: ' + r.error, 'text'); td.colSpan = 3; tr.appendChild(td);
      } else {
        tr.appendChild(el('td', pct(r.mean)));
        tr.appendChild(el('td', r.sd === undefined ? '' : pct(r.sd)));
        tr.appendChild(el('td', r.label, 'text'));
      }
      table.appendChild(tr);
    });
    $('progress-text').textContent = 'Comparison done.';
  }

  // ---------- results ----------
  function svgImage(figure, svg, name) {
    const fig = $(figure);
    if (!svg) { fig.hidden = true; return; }
    fig.hidden = false;
    const url = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }));
    const img = fig.querySelector('img');
    img.src = url;
    const cap = fig.querySelector('figcaption');
    cap.replaceChildren();
    const png = el('button', 'PNG'); png.type = 'button';
    png.addEventListener('click', () => exportPng(img, name));
    const vec = el('button', 'SVG'); vec.type = 'button';
    vec.addEventListener('click', () => download(`${baseName()}-${name}.svg`, svg, 'image/svg+xml'));
    cap.append(el('span', 'Save as'), png, vec);
  }

  function exportPng(img, name) {
    const scale = 2;
    const canvas = el('canvas');
    canvas.width = img.naturalWidth * scale; canvas.height = img.naturalHeight * scale;
    const ctx = canvas.getContext('2d');
    ctx.scale(scale, scale);
    ctx.drawImage(img, 0, 0);
    canvas.toBlob((blob) => {
      const url = URL.createObjectURL(blob);
      const a = el('a'); a.href = url; a.download = `${baseName()}-${name}.png`; document.body.appendChild(a); a.click(); a.remove();
      setTimeout(() => URL.revokeObjectURL(url), 1000);
    }, 'image/png');
  }

  function showResults(res) {
    const r = res.report;
    showKind();
    $('results').hidden = false;
    $('headline').textContent = res.headline;
    showNotes(r);
    const t = $('scores'); t.replaceChildren();
    const hr = el('tr'); ['', 'mean', 'SD', '2.5 pct', '97.5 pct'].forEach((h) => hr.appendChild(el('th', h))); t.appendChild(hr);
    [['accuracy', r.summary.accuracy], ['balanced accuracy', r.summary.balanced_accuracy]].forEach(([name, s]) => {
      const tr = el('tr'); tr.appendChild(el('th', name, 'text'));
      [s.mean, s.sd, s.p2_5, s.p97_5].forEach((v) => tr.appendChild(el('td', pct(v)))); t.appendChild(tr);
    });
    const chance = el('tr'); chance.appendChild(el('th', 'chance', 'text')); chance.appendChild(el('td', pct(r.chance.level)));
    const thr = el('td', `binomial threshold (α = ${r.chance.alpha}, ${r.chance.test_trials} test trials): ${pct(r.chance.threshold)}`, 'text');
    thr.colSpan = 3; chance.appendChild(thr); t.appendChild(chance);
    if (r.shuffle.p_value !== null) {
      const tr = el('tr'); tr.appendChild(el('th', 'shuffled labels', 'text'));
      tr.appendChild(el('td', pct(r.shuffle.null_mean))); tr.appendChild(el('td', pct(r.shuffle.null_sd)));
      const td = el('td', `95th pct ${pct(r.shuffle.null_p95)}, p = ${r.shuffle.p_value.toPrecision(3)} (${r.shuffle.count} shuffles × ${r.shuffle.repeats_each} repeats${r.shuffle.within_groups ? ', within groups' : ''})`, 'text');
      td.colSpan = 2; tr.appendChild(td); t.appendChild(tr);
    }
    svgImage('fig-scores', res.plots.scores, 'scores');
    svgImage('fig-null', res.plots.null, 'null');
    svgImage('fig-confusion', res.plots.confusion, 'confusion');
    const rt = $('recall'); rt.replaceChildren();
    const rh = el('tr'); ['class', 'trials', 'recall'].forEach((h) => rh.appendChild(el('th', h, h === 'class' ? 'text' : ''))); rt.appendChild(rh);
    r.classes.forEach((c, i) => {
      const tr = el('tr'); tr.appendChild(el('td', c, 'text')); tr.appendChild(el('td', r.class_counts[i]));
      tr.appendChild(el('td', pct(r.summary.recall[i]))); rt.appendChild(tr);
    });
    $('methods').textContent = res.methods;
    $('results').scrollIntoView({ behavior: 'smooth', block: 'start' });
  }

  function showTimeResults(res) {
    const r = res.report;
    showKind();
    $('results').hidden = false;
    $('headline').textContent = res.headline;
    showNotes(r);
    $('onset').textContent = r.onset
      ? `Onset: ${r.onset.time} s, the first window of the earliest significant cluster (approximate: a cluster test does not date an onset precisely).`
      : (r.shuffle.count ? 'No significant cluster, so no onset.' : 'No shuffles were run, so nothing is tested.');
    const t = $('clusters'); t.replaceChildren();
    const rows = [...r.clusters.map((c) => ['time course', `${c.start} to ${c.end} s`, '', c.mass, c.p_value, c.significant])];
    if (r.generalization) {
      // The matrix has many small chance clusters: list the significant ones and count the rest.
      const g = r.generalization.clusters;
      g.filter((c) => c.significant).forEach((c) => rows.push(['generalization', `${c.train_start} to ${c.train_end} s`, `${c.test_start} to ${c.test_end} s`, c.mass, c.p_value, true]));
      const rest = g.filter((c) => !c.significant);
      if (rest.length) {
        rows.push([`generalization: ${rest.length} more, none significant`, '', '', Math.max(...rest.map((c) => c.mass)), Math.min(...rest.map((c) => c.p_value)), false]);
      }
    }
    if (rows.length) {
      const hr = el('tr');
      ['clusters', 'trained (window centres)', 'tested', 'mass', 'p', ''].forEach((h) => hr.appendChild(el('th', h, 'text')));
      t.appendChild(hr);
      rows.forEach(([what, a, b, mass, p, sig]) => {
        const tr = el('tr');
        [what, a, b].forEach((v) => tr.appendChild(el('td', v, 'text')));
        tr.appendChild(el('td', mass.toFixed(3)));
        tr.appendChild(el('td', p.toPrecision(3)));
        tr.appendChild(el('td', sig ? 'significant' : '', 'text'));
        t.appendChild(tr);
      });
    }
    svgImage('fig-curve', res.plots.curve, 'curve');
    svgImage('fig-generalization', res.plots.generalization, 'generalization');
    $('export-matrix').hidden = !res.csv.generalization;
    $('methods').textContent = res.methods;
    $('results').scrollIntoView({ behavior: 'smooth', block: 'start' });
  }

  // Warnings, and with nested selection how often each C was chosen.
  function showNotes(r) {
    const notes = $('warnings'); notes.replaceChildren();
    r.warnings.forEach((w) => notes.appendChild(el('li', w)));
    if (r.tuning) {
      const used = r.tuning.chosen.filter((c) => c.fits > 0)
        .map((c) => `C = ${c.c}${c.gamma_factor ? ', γ × ' + c.gamma_factor : ''} in ${c.fits} fit${c.fits === 1 ? '' : 's'}`);
      notes.appendChild(el('li', 'Settings chosen by nested cross-validation: ' + used.join('; '), 'info'));
    }
  }

  function scoresCsv(r) {
    const q = (s) => '"' + String(s).replace(/"/g, '""') + '"';
    const lines = ['kind,index,accuracy,balanced_accuracy'];
    r.repeats.forEach((x) => lines.push(`repeat,${x.index},${x.accuracy},${x.balanced_accuracy}`));
    r.shuffle.null.forEach((v, j) => lines.push(`shuffle,${j},${r.design.headline === 'accuracy' ? v : ''},${r.design.headline === 'accuracy' ? '' : v}`));
    lines.push('', 'true class,' + r.classes.map(q).join(','));
    r.summary.confusion.forEach((row, i) => lines.push(q(r.classes[i]) + ',' + row.join(',')));
    return lines.join('\n') + '\n';
  }

  // ---------- wiring ----------
  function wire() {
    $('file').addEventListener('change', async (e) => {
      const f = e.target.files[0];
      if (f) await loadFile(f.name, new Uint8Array(await f.arrayBuffer()));
      e.target.value = '';
    });
    $('nwb-file').addEventListener('change', (e) => {
      if (e.target.files[0]) readNwb(e.target.files[0]);
      e.target.value = '';
    });
    for (const [id, load] of [['events-file', loadEvents], ['trials-file', loadFile]]) {
      $(id).addEventListener('change', async (e) => {
        const f = e.target.files[0];
        if (f) await load(f.name, new Uint8Array(await f.arrayBuffer()));
        e.target.value = '';
      });
    }
    const drop = $('drop');
    drop.addEventListener('dragover', (e) => { e.preventDefault(); drop.classList.add('over'); });
    drop.addEventListener('dragleave', () => drop.classList.remove('over'));
    drop.addEventListener('drop', async (e) => {
      e.preventDefault(); drop.classList.remove('over');
      await loadDropped([...e.dataTransfer.files].slice(0, 2));
    });
    const example = async () => {
      const texts = await Promise.all(EXAMPLES[state.kind].map(async (name) => (window.POPDECODE_EXAMPLES
        ? window.POPDECODE_EXAMPLES[name] : (await fetch('samples/' + name)).text())));
      const bytes = texts.map((t) => new TextEncoder().encode(t));
      if (state.kind === 'events') {
        await loadEvents(EXAMPLES.events[0], bytes[0]);
        await loadFile(EXAMPLES.events[1], bytes[1]);
        $('t-start').value = -0.5; $('t-end').value = 1;
      } else {
        await loadFile(EXAMPLES[state.kind][0], bytes[0]);
      }
      $('group').value = 'session';
      refreshPlan();
    };
    $('example').addEventListener('click', example);
    $('example-events').addEventListener('click', example);
    document.querySelectorAll('input[name=kind]').forEach((r) => r.addEventListener('change', () => setKind(r.value)));
    $('unit-col').addEventListener('change', () => { fillUnitFilter(); refreshPlan(); });
    ['label', 'group', 'pseudo', 'features', 'trial-col', 'time-col', 'neuron-col', 'align-col', 'unit-op', 'unit-value', ...SETTING_IDS]
      .forEach((id) => $(id).addEventListener('change', refreshPlan));
    $('start').addEventListener('click', start);
    $('compare-start').addEventListener('click', compare);
    $('neurons-start').addEventListener('click', neurons);
    $('export-neurons').addEventListener('click', () => state.neurons && download(`${baseName()}-neurons.json`, state.neurons.report_json + '\n', 'application/json'));
    $('cancel').addEventListener('click', cancel);
    $('save-recipe').addEventListener('click', () => download(`${baseName()}.recipe.json`, JSON.stringify(readRecipe(), null, 2) + '\n', 'application/json'));
    $('recipe-file').addEventListener('change', async (e) => {
      const f = e.target.files[0];
      e.target.value = '';
      if (!f) return;
      try {
        applyRecipe(JSON.parse(wasm_bindgen.check_recipe(await f.text())));
        $('recipe-status').textContent = `Loaded ${f.name}.`;
        refreshPlan();
      } catch (err) { $('recipe-status').textContent = String(err); }
    });
    $('copy-methods').addEventListener('click', async () => {
      const text = $('methods').textContent;
      try { await navigator.clipboard.writeText(text); $('copy-status').textContent = 'Copied.'; } catch (_) {
        const range = document.createRange(); range.selectNodeContents($('methods'));
        const sel = getSelection(); sel.removeAllRanges(); sel.addRange(range);
        $('copy-status').textContent = 'Selected: press Ctrl+C to copy.';
      }
    });
    $('export-json').addEventListener('click', () => state.result && download(`${baseName()}-result.json`, state.result.report_json + '\n', 'application/json'));
    $('export-csv').addEventListener('click', () => state.result && download(`${baseName()}-scores.csv`, scoresCsv(state.result.report), 'text/csv'));
    $('export-curve').addEventListener('click', () => state.result && download(`${baseName()}-curve.csv`, state.result.csv.curve, 'text/csv'));
    $('export-matrix').addEventListener('click', () => state.result && state.result.csv.generalization &&
      download(`${baseName()}-generalization.csv`, state.result.csv.generalization, 'text/csv'));
    $('export-recipe').addEventListener('click', () => state.lastRecipe && download(`${baseName()}.recipe.json`, JSON.stringify(state.lastRecipe, null, 2) + '\n', 'application/json'));
  }

  window.addEventListener('DOMContentLoaded', init);
}());
