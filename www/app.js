// The page: reads the file locally, draws the form, runs tasks on a pool of workers and shows the results.
// Everything taken from the user's file is inserted with textContent or as an <img> of core-escaped SVG, never as
// HTML. The page never sends anything anywhere.
/* global wasm_bindgen */
'use strict';
(function () {
  const $ = (id) => document.getElementById(id);
  const STORE = 'popdecode.settings';
  const state = { module: null, file: null, info: null, pool: [], run: null, result: null, lastRecipe: null };

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
    drawPreview(info);
    fillColumns(info);
    $('data-view').hidden = false;
    refreshPlan();
  }

  function drawPreview(info) {
    const t = $('preview');
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

  function fillColumns(info) {
    const label = $('label'); const group = $('group'); const feats = $('features');
    label.replaceChildren(); group.replaceChildren(); feats.replaceChildren();
    info.headers.forEach((h) => label.appendChild(option(h, h, h === info.suggested_label)));
    group.appendChild(option('', '(none)', true));
    info.headers.forEach((h) => group.appendChild(option(h, h, false)));
    info.headers.forEach((h, i) => { if (info.numeric[i]) feats.appendChild(option(h, h, true)); });
    syncFeatureOptions();
  }

  // A column chosen as label or group cannot also be a feature.
  function syncFeatureOptions() {
    const used = [$('label').value, $('group').value];
    for (const o of $('features').options) {
      o.disabled = used.includes(o.value);
      if (o.disabled) o.selected = false;
    }
  }

  // ---------- recipe ----------
  function readRecipe() {
    const recipe = JSON.parse(wasm_bindgen.default_recipe($('label').value || 'label'));
    recipe.columns.group = $('group').value || null;
    const feats = [...$('features').options].filter((o) => o.selected).map((o) => o.value);
    const allNumeric = [...$('features').options].filter((o) => !o.disabled).map((o) => o.value);
    recipe.columns.features = feats.length === allNumeric.length ? null : feats;
    recipe.columns.drop_missing = $('drop-missing').checked;
    recipe.classifier = $('classifier').value;
    recipe.c = Number($('c').value);
    const folds = $('folds').value.trim().toLowerCase();
    recipe.folds = folds === 'loo' ? 'loo' : Number(folds);
    recipe.repeats = Number($('repeats').value);
    recipe.balance = $('balance').checked;
    recipe.shuffles = Number($('shuffles').value);
    recipe.shuffle_repeats = $('shuffle-repeats').value === '' ? null : Number($('shuffle-repeats').value);
    recipe.seed = Number($('seed').value);
    return recipe;
  }

  function applyRecipe(r) {
    $('classifier').value = r.classifier;
    $('c').value = r.c;
    $('folds').value = r.folds;
    $('repeats').value = r.repeats;
    $('balance').checked = r.balance;
    $('shuffles').value = r.shuffles;
    $('shuffle-repeats').value = r.shuffle_repeats === null || r.shuffle_repeats === undefined ? '' : r.shuffle_repeats;
    $('seed').value = r.seed;
    $('drop-missing').checked = !!r.columns.drop_missing;
    if (state.info) {
      const has = (c) => c && state.info.headers.includes(c);
      if (has(r.columns.label)) $('label').value = r.columns.label;
      $('group').value = has(r.columns.group) ? r.columns.group : '';
      syncFeatureOptions();
      if (Array.isArray(r.columns.features)) {
        for (const o of $('features').options) o.selected = !o.disabled && r.columns.features.includes(o.value);
      }
    }
  }

  const SETTING_IDS = ['classifier', 'c', 'folds', 'repeats', 'balance', 'shuffles', 'shuffle-repeats', 'seed', 'drop-missing'];
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
    $('c').disabled = $('classifier').value !== 'linear-svm';
    saveSettings();
    if (!state.file) return;
    clearError('data-error');
    const box = $('classes');
    box.replaceChildren();
    let plan;
    try {
      const recipe = readRecipe();
      $('cli-line').textContent = cliLine(recipe);
      plan = JSON.parse(wasm_bindgen.prepare(state.file.name, state.file.bytes, JSON.stringify(recipe)));
    } catch (e) {
      showError('data-error', String(e));
      $('start').disabled = true;
      return;
    }
    const folds = readRecipe().folds;
    const max = Math.max(...plan.class_counts);
    const min = Math.min(...plan.class_counts);
    box.appendChild(el('h3', `Trials per class (${plan.trials} trials, ${plan.features} features)`));
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

  function cliLine(r) {
    const q = (s) => (/^[\w.,-]+$/.test(s) ? s : `'${s.replace(/'/g, "'\\''")}'`);
    const parts = ['popdecode decode', q(state.file ? state.file.name : 'FILE'), '--label', q(r.columns.label)];
    if (r.columns.group) parts.push('--group', q(r.columns.group));
    if (r.columns.features) parts.push('--features', q(r.columns.features.join(',')));
    parts.push('--classifier', r.classifier);
    if (r.classifier === 'linear-svm') parts.push('--c', r.c);
    parts.push('--folds', r.folds, '--repeats', r.repeats, '--shuffles', r.shuffles);
    if (r.shuffle_repeats !== null) parts.push('--shuffle-repeats', r.shuffle_repeats);
    if (!r.balance) parts.push('--no-balance');
    if (r.columns.drop_missing) parts.push('--drop-missing');
    parts.push('--seed', r.seed);
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
    if (!state.file || state.run) return;
    clearError('run-error');
    let recipe, plan;
    try {
      recipe = readRecipe();
      plan = JSON.parse(wasm_bindgen.prepare(state.file.name, state.file.bytes, JSON.stringify(recipe)));
    } catch (e) { showError('run-error', String(e)); return; }
    const queue = plan.tasks.map((t, i) => ({ kind: t.kind, index: t.index, fits: plan.fits[i] }));
    const run = {
      recipe: JSON.stringify(recipe), queue, next: 0, outcomes: [], fitsDone: 0,
      fitsTotal: plan.fits.reduce((a, b) => a + b, 0), started: performance.now(), failed: false,
    };
    state.run = run;
    state.lastRecipe = recipe;
    $('start').disabled = true; $('cancel').disabled = false;
    $('progress').hidden = false; $('progress').value = 0;
    $('progress-text').textContent = 'Starting workers…';
    const n = Math.min(poolSize(), queue.length);
    for (let w = 0; w < n; w++) {
      const worker = makeWorker();
      state.pool.push(worker);
      worker.onmessage = (ev) => onWorkerMessage(run, worker, ev.data);
      worker.onerror = (ev) => fail(run, 'a worker stopped: ' + (ev.message || 'unknown error'));
      worker.postMessage({ type: 'init', module: state.module, name: state.file.name, bytes: state.file.bytes, recipe: run.recipe });
    }
  }

  function give(run, worker) {
    if (run.next >= run.queue.length) return;
    const t = run.queue[run.next++];
    worker.postMessage({ type: 'task', kind: t.kind, index: t.index });
  }

  function onWorkerMessage(run, worker, msg) {
    if (run !== state.run) return;
    if (msg.type === 'ready') { give(run, worker); return; }
    if (msg.type === 'error') { fail(run, msg.message); return; }
    if (msg.type === 'done') {
      run.outcomes.push(msg.outcome);
      const t = run.queue.find((q) => q.kind === msg.kind && q.index === msg.index);
      run.fitsDone += t ? t.fits : 0;
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
    $('start').disabled = !state.file;
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
      result = JSON.parse(wasm_bindgen.finish(state.file.name, state.file.bytes, run.recipe, '[' + run.outcomes.join(',') + ']'));
    } catch (e) { showError('run-error', String(e)); return; }
    const seconds = ((performance.now() - run.started) / 1000).toFixed(1);
    $('progress-text').textContent = `Done: ${run.fitsTotal} fits in ${seconds} s on ${Math.min(poolSize(), run.queue.length)} workers.`;
    state.result = result;
    showResults(result);
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
    $('results').hidden = false;
    $('headline').textContent = res.headline;
    const warn = $('warnings'); warn.replaceChildren();
    r.warnings.forEach((w) => warn.appendChild(el('li', w)));
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
    const drop = $('drop');
    drop.addEventListener('dragover', (e) => { e.preventDefault(); drop.classList.add('over'); });
    drop.addEventListener('dragleave', () => drop.classList.remove('over'));
    drop.addEventListener('drop', async (e) => {
      e.preventDefault(); drop.classList.remove('over');
      const f = e.dataTransfer.files[0];
      if (f) await loadFile(f.name, new Uint8Array(await f.arrayBuffer()));
    });
    $('example').addEventListener('click', async () => {
      const text = window.POPDECODE_EXAMPLE_CSV !== undefined
        ? window.POPDECODE_EXAMPLE_CSV
        : await (await fetch('samples/odours.csv')).text();
      await loadFile('odours.csv', new TextEncoder().encode(text));
      $('group').value = 'session';
      refreshPlan();
    });
    ['label', 'group', 'features', ...SETTING_IDS].forEach((id) => $(id).addEventListener('change', refreshPlan));
    $('start').addEventListener('click', start);
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
    $('export-recipe').addEventListener('click', () => state.lastRecipe && download(`${baseName()}.recipe.json`, JSON.stringify(state.lastRecipe, null, 2) + '\n', 'application/json'));
  }

  window.addEventListener('DOMContentLoaded', init);
}());
