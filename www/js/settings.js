// Settings and the recipe: reading the form into a recipe (each problem beside its field, in words), loading a
// recipe file into the form, the help disclosures tied to their fields, the settings kept in this browser, and the
// command line that would do the same.
'use strict';
(function (PD) {
  const { $, el } = PD;
  const S = PD.state;
  const STORE = 'popdecode.settings';
  PD.WITH_C = ['linear-svm', 'logistic', 'rbf-svm'];
  PD.DECODER_NAMES = {
    'linear-svm': 'linear SVM', 'shrinkage-lda': 'shrinkage LDA', logistic: 'logistic regression',
    'gaussian-nb': 'Gaussian naive Bayes', 'poisson-nb': 'Poisson naive Bayes', 'nearest-mean': 'nearest mean',
    'rbf-svm': 'SVM, Gaussian kernel',
  };
  PD.SETTING_IDS = ['classifier', 'c', 'tune', 'folds', 'repeats', 'balance', 'shuffles', 'shuffle-repeats', 'seed',
    'drop-missing', 'width', 'step', 't-start', 't-end', 'generalize', 'generalization-null', 'alpha', 'pairwise', 'draws',
    'neuron-shuffles'];
  PD.NULL_WORDS = {
    'training-labels': 'null of the generalization matrix: training labels shuffled, test labels kept',
    'all-labels': 'null of the generalization matrix: every label shuffled',
  };

  // ---------- help disclosures and field messages ----------
  // Each field's help is behind a small "?" button (aria-expanded) and takes no space when closed; the control
  // names it with aria-describedby (read by screen readers whether open or not), and so its error message.
  PD.setUpHelp = function () {
    document.querySelectorAll('.field').forEach((field) => {
      const help = field.querySelector('.help[id]');
      const control = field.querySelector('input, select');
      const label = field.querySelector('label');
      if (!help || !control || !label) return;
      help.hidden = true;
      const toggle = el('button', '?', 'help-toggle');
      toggle.type = 'button';
      toggle.setAttribute('aria-expanded', 'false');
      toggle.setAttribute('aria-controls', help.id);
      toggle.setAttribute('aria-label', 'About ' + label.textContent.trim());
      toggle.addEventListener('click', () => {
        help.hidden = !help.hidden;
        toggle.setAttribute('aria-expanded', String(!help.hidden));
      });
      label.after(toggle);
      describe(control, help.id, true);
    });
  };

  function describe(control, id, on) {
    const ids = (control.getAttribute('aria-describedby') || '').split(' ').filter((x) => x && x !== id);
    if (on) ids.push(id);
    if (ids.length) control.setAttribute('aria-describedby', ids.join(' ')); else control.removeAttribute('aria-describedby');
  }

  // A problem shown beside its field (or cleared with an empty message).
  PD.fieldProblem = function (id, message) {
    const control = $(id);
    if (!control) return;
    const errId = id + '-error';
    let box = $(errId);
    if (!message) {
      if (box) box.remove();
      control.removeAttribute('aria-invalid');
      describe(control, errId, false);
      return;
    }
    if (!box) {
      box = el('p', null, 'field-error');
      box.id = errId;
      const field = control.closest('.field') || control.parentElement;
      field.appendChild(box);
    }
    box.textContent = PD.pageWords(message);
    control.setAttribute('aria-invalid', 'true');
    describe(control, errId, true);
  };

  PD.clearFieldProblems = function () {
    document.querySelectorAll('.field-error').forEach((b) => PD.fieldProblem(b.id.replace(/-error$/, ''), ''));
  };

  // ---------- the form as a recipe ----------
  const WHOLE = /^\s*\d+\s*$/;
  const NUMBER = /^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$/;

  // Read the form into a recipe. Returns { recipe, problems: [[field id, message]] }; a recipe with problems is
  // not to be run.
  PD.readRecipe = function () {
    const problems = [];
    const whole = (id, name, min, max = Number.MAX_SAFE_INTEGER) => {
      const v = $(id).value;
      if (!WHOLE.test(v) || Number(v) < min || Number(v) > max) {
        problems.push([id, `${name} must be a whole number, ${min} or more${max < Number.MAX_SAFE_INTEGER ? `, at most ${max}` : ''}.`]);
        return min;
      }
      return Number(v);
    };
    const number = (id, name, check, rule) => {
      const v = $(id).value;
      if (!NUMBER.test(v) || !Number.isFinite(Number(v)) || (check && !check(Number(v)))) {
        problems.push([id, `${name} must be ${rule || 'a number'}.`]);
        return 0;
      }
      return Number(v);
    };
    const info = PD.mainInfo();
    const recipe = PD.defaultRecipe($('label').value || 'label');
    recipe.columns.group = $('group').value || null;
    if (S.kind === 'table' && $('pseudo').value) {
      recipe.columns.pseudo = $('pseudo').value;
      recipe.columns.group = null;
    }
    // A study of trial or binned tables chooses its features from the first session's columns, as one file does.
    if ((PD.shape() === 'table' || PD.shape() === 'binned') && info) {
      const chosen = PD.chosenFeatures();
      if (!chosen.length) problems.push(['feature-filter', 'Choose at least one feature column.']);
      // The columns "every other column" would take: every numeric one (trial table), every remaining one
      // (binned table). Say the choice as that minus a short list when it is one.
      const special = [...S.features.disabled];
      const others = PD.shape() === 'table' ? S.features.names.filter((n) => !special.includes(n))
        : info.headers.filter((n) => !special.includes(n));
      const left = others.filter((n) => !chosen.includes(n));
      // A trial counter is left out of "every other column" by the core as by this page: one ticked is named.
      if (chosen.some((c) => (S.features.counters || []).includes(c))) recipe.columns.features = chosen;
      else if (left.length === 0) recipe.columns.features = null;
      else if (left.length <= chosen.length) { recipe.columns.features = null; recipe.columns.ignore = left; }
      else recipe.columns.features = chosen;
    }
    recipe.columns.drop_missing = S.kind === 'table' && $('drop-missing').checked;
    recipe.classifier = $('classifier').value;
    recipe.tune = PD.WITH_C.includes(recipe.classifier) && $('tune').checked;
    recipe.c = PD.WITH_C.includes(recipe.classifier) && !recipe.tune
      ? number('c', 'C', (v) => v > 0, 'a number above 0 (for example 1 or 0.01)') : Number($('c').value) > 0 ? Number($('c').value) : 1;
    const folds = $('folds').value.trim().toLowerCase();
    recipe.folds = folds === 'loo' ? 'loo' : whole('folds', 'Folds (or loo for leave-one-out)', 2);
    recipe.repeats = whole('repeats', 'Repeats', 1);
    recipe.balance = $('balance').checked;
    recipe.shuffles = whole('shuffles', 'Shuffles', 0);
    recipe.shuffle_repeats = $('shuffle-repeats').value.trim() === '' ? null : whole('shuffle-repeats', 'Repeats per shuffle (or empty)', 1);
    // As the core requires (crate/recipe/mod.rs, `validate`): a null averaging more repeats than the observed
    // score would be too narrow.
    if (recipe.shuffles > 0 && Number.isInteger(recipe.shuffle_repeats) && Number.isInteger(recipe.repeats) &&
      recipe.shuffle_repeats > recipe.repeats) {
      problems.push(['shuffle-repeats', `Repeats per shuffle must be at most the Repeats (${recipe.repeats}): a shuffle ` +
        'averaging more repeats than the observed score would vary less than it, and its p-value would be too small.']);
    }
    recipe.seed = whole('seed', 'Seed', 0);
    // Written only when on, as the core writes a recipe (a recipe without it is not pairwise).
    if (S.kind === 'table' && $('pairwise').checked) recipe.pairwise = true;
    const windows = () => {
      const w = { width: number('width', 'Window width', (v) => v > 0, 'a number of seconds above 0'),
        step: number('step', 'Window step', (v) => v > 0, 'a number of seconds above 0'),
        start: number('t-start', 'From', null, 'a number of seconds'), end: number('t-end', 'To', null, 'a number of seconds') };
      if (w.end <= w.start && !problems.some(([id]) => id === 't-end' || id === 't-start')) problems.push(['t-end', 'To must be later than From.']);
      return w;
    };
    const shape = PD.shape();
    if (shape === 'binned') {
      recipe.time = { input: { kind: 'binned', trial: $('trial-col').value, time: $('time-col').value } };
    } else if (shape === 'nwb') {
      recipe.time = { input: { kind: 'nwb', align: $('align-col').value || null, ...windows(), units: PD.unitFilters() } };
    } else if (shape === 'events') {
      recipe.time = {
        input: { kind: 'events', trial: $('trial-col').value, neuron: $('neuron-col').value, time: $('time-col').value,
          align: $('align-col').value || null, ...windows() },
      };
    }
    if (recipe.time) {
      recipe.time.generalize = $('generalize').checked;
      // The null matters only for the matrix: written with it, as the core writes the one it used.
      if (recipe.time.generalize) recipe.time.generalization_null = $('generalization-null').value;
      recipe.time.alpha = number('alpha', 'Cluster α', (v) => v > 0 && v < 1, 'a number between 0 and 1 (for example 0.05)');
    }
    if (S.kind === 'study') problems.push(...PD.studyProblems());
    return { recipe, problems };
  };

  PD.readDraws = () => {
    const v = $('draws').value;
    return WHOLE.test(v) && Number(v) >= 1 ? Number(v) : null;
  };

  PD.showProblems = function (problems) {
    PD.clearFieldProblems();
    problems.forEach(([id, message]) => PD.fieldProblem(id, message));
  };

  // ---------- a recipe file into the form ----------
  PD.applyRecipe = function (r) {
    const kind = r.time ? r.time.input.kind : S.kind === 'study' ? 'study' : 'table';
    let note = '';
    if (kind !== S.kind) {
      PD.setKind(kind);
      note = ' It is for another kind of data: load the data now.';
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
    $('pairwise').checked = !!r.pairwise;
    if (r.time) {
      $('generalize').checked = !!r.time.generalize;
      $('generalization-null').value = r.time.generalization_null || 'training-labels';
      $('alpha').value = r.time.alpha;
      const t = r.time.input;
      if (t.kind === 'events' || t.kind === 'nwb') {
        $('width').value = t.width; $('step').value = t.step; $('t-start').value = t.start; $('t-end').value = t.end;
      }
    }
    const info = PD.mainInfo();
    const pick = (id, value, headers) => { if (value && headers && headers.includes(value)) $(id).value = value; };
    if (info) {
      const h = info.headers || info.columns.map((c) => c.name);
      pick('label', r.columns.label, h);
      $('group').value = r.columns.group && h.includes(r.columns.group) ? r.columns.group : '';
      $('pseudo').value = r.columns.pseudo && h.includes(r.columns.pseudo) ? r.columns.pseudo : '';
      if (r.time) {
        pick('trial-col', r.time.input.trial, h);
        if (r.time.input.kind === 'binned') pick('time-col', r.time.input.time, h);
        if (r.time.input.kind === 'events') $('align-col').value = r.time.input.align && h.includes(r.time.input.align) ? r.time.input.align : '';
        if (r.time.input.kind === 'nwb') {
          $('align-col').value = h.includes(r.time.input.align || 'start_time') ? r.time.input.align || 'start_time' : '';
          note += applyUnitFilters(r.time.input.units || []);
        }
      }
      PD.syncFeatures();
      if (Array.isArray(r.columns.features)) PD.setFeatures(r.columns.features);
      else PD.setFeatures(S.features.names.filter((n) => !(r.columns.ignore || []).includes(n)));
    }
    const events = S.files.events && S.files.events.info;
    if (events && r.time && r.time.input.kind === 'events') {
      pick('neuron-col', r.time.input.neuron, events.headers);
      pick('time-col', r.time.input.time, events.headers);
    }
    return note;
  };

  // The page shows one unit filter; a recipe with more is refused here rather than run with fewer.
  function applyUnitFilters(filters) {
    const f = filters[0];
    const known = (S.unitColumns || []).some((u) => f && u.name === f.column);
    $('unit-col').value = known ? f.column : '';
    PD.fillUnitFilter(known ? f.op : undefined, known ? f.values.join(',') : undefined);
    if (filters.length > 1) return ' It keeps units by several filters; the page applies one: run it from the command line.';
    if (f && !known) return ` It keeps units by '${f.column}', which this file's units table does not have.`;
    return '';
  }

  // ---------- kept in this browser ----------
  PD.saveSettings = function () {
    const s = {};
    PD.SETTING_IDS.forEach((id) => { const e = $(id); s[id] = e.type === 'checkbox' ? e.checked : e.value; });
    try { localStorage.setItem(STORE, JSON.stringify(s)); } catch (_) { /* storage may be off: fine */ }
  };
  PD.restoreSettings = function () {
    let s = null;
    try { s = JSON.parse(localStorage.getItem(STORE) || 'null'); } catch (_) { s = null; }
    if (!s) return;
    PD.SETTING_IDS.forEach((id) => {
      const e = $(id);
      if (!(id in s)) return;
      if (e.type === 'checkbox') e.checked = !!s[id]; else e.value = s[id];
    });
  };

  // ---------- the same on the command line ----------
  PD.cliLine = function (r) {
    const q = (s) => (/^[\w.,-]+$/.test(String(s)) ? String(s) : `'${String(s).replace(/'/g, "'\\''")}'`);
    const name = (slot, fallback) => q(S.files[slot] ? S.files[slot].name : fallback);
    const parts = [];
    const t = r.time && r.time.input;
    const windows = () => parts.push('--width', t.width, '--step', t.step, '--start', t.start, '--end', t.end);
    if (S.kind === 'study') {
      parts.push('popdecode study', q(S.study && S.study.table ? S.study.table : 'STUDY.csv'));
      if (t && t.kind === 'binned') parts.push('--binned', '--trial', q(t.trial), '--time', q(t.time));
      if (t && t.kind === 'events') parts.push('--trial', q(t.trial), '--neuron', q(t.neuron), '--time', q(t.time));
      if (t && t.kind !== 'binned') {
        if (t.align) parts.push('--align', q(t.align));
        windows();
        (t.units || []).forEach((f) => parts.push('--units', q(`${f.column}${f.op}${f.values.join(',')}`)));
      }
    } else if (!t) parts.push('popdecode decode', name('table', 'FILE'));
    else if (t.kind === 'binned') parts.push('popdecode timecourse', name('table', 'FILE'), '--trial', q(t.trial), '--time', q(t.time));
    else if (t.kind === 'nwb') {
      parts.push('popdecode timecourse --nwb', name('nwb', 'FILE.nwb'));
      if (t.align) parts.push('--align', q(t.align));
      windows();
      (t.units || []).forEach((f) => parts.push('--units', q(`${f.column}${f.op}${f.values.join(',')}`)));
    } else {
      parts.push('popdecode timecourse --events', name('events', 'EVENTS'), '--trials', name('trials', 'TRIALS'),
        '--trial', q(t.trial), '--neuron', q(t.neuron), '--time', q(t.time));
      if (t.align) parts.push('--align', q(t.align));
      windows();
    }
    // Before data is loaded the label is a placeholder, not the form's default that reads like a column's name.
    parts.push('--label', PD.dataReady() && r.columns.label ? q(r.columns.label) : 'COLUMN');
    if (r.columns.group) parts.push('--group', q(r.columns.group));
    if (r.columns.pseudo) parts.push('--pseudo', q(r.columns.pseudo));
    if (r.columns.features) parts.push('--features', q(r.columns.features.join(',')));
    if (r.columns.ignore && r.columns.ignore.length) parts.push('--ignore', q(r.columns.ignore.join(',')));
    parts.push('--classifier', r.classifier);
    if (r.tune) parts.push('--tune');
    else if (PD.WITH_C.includes(r.classifier)) parts.push('--c', r.c);
    parts.push('--folds', r.folds, '--repeats', r.repeats, '--shuffles', r.shuffles);
    if (r.shuffle_repeats !== null) parts.push('--shuffle-repeats', r.shuffle_repeats);
    if (!r.balance) parts.push('--no-balance');
    if (r.columns.drop_missing) parts.push('--drop-missing');
    if (r.pairwise) parts.push('--pairwise');
    parts.push('--seed', r.seed);
    if (r.time && r.time.generalize) parts.push('--generalize');
    if (r.time && r.time.generalization_null) parts.push('--generalization-null', r.time.generalization_null);
    if (r.time && r.time.alpha !== 0.05) parts.push('--alpha', r.time.alpha);
    if (r.angle_unit) parts.push('--angle-unit', r.angle_unit);
    if (r.across && r.across.column) {
      parts.push('--across', q(r.across.column));
      r.across.assignments.forEach((a) => parts.push('--train-levels', q(a.train.join(',')), '--test-levels', q(a.test.join(','))));
    }
    return parts.join(' ');
  };

  // A command line shown in a box, each option with its value in a span that does not wrap, so a line never breaks
  // inside "--shuffles 200".
  PD.showCli = (box, recipe) => box.replaceChildren(...PD.cliLine(recipe).split(/ (?=--)/)
    .flatMap((part, i) => [...(i ? [' '] : []), PD.el('span', part, 'unbroken')]));

  // The recipe's settings in words, for a record's heading and for saying what changed since. `design`, when
  // given, is the design the run used (its report's `design`): a split that held each group out says why Folds
  // did not matter.
  // `ran`, when given, is the recipe as the run used it (its report's `recipe`): fewer repeats than asked are said.
  // `every`: the run fitted every decoder on these settings (the comparison), not the one the recipe names.
  PD.describeSettings = function (r, design, ran, every = false) {
    const parts = [every ? `every decoder (C = ${r.c} for those that take it)`
      : PD.DECODER_NAMES[r.classifier] + (r.tune ? ', C chosen inside each training fold' : PD.WITH_C.includes(r.classifier) ? `, C = ${r.c}` : '')];
    const split = design && design.split;
    const folds = split === 'leave_one_group_out' ? `leave one '${r.columns.group}' out (Folds ${r.folds}${r.folds === 'loo' ? '' : `, at least the ${design.folds} groups`})`
      : split === 'leave_one_out' ? 'leave-one-out' : `folds ${r.folds}`;
    const repeats = ran && ran.repeats < r.repeats
      ? `${PD.count(ran.repeats, 'repeat')} run (${r.repeats} asked: every repeat would split the trials alike)`
      : PD.count(r.repeats, 'repeat');
    parts.push(folds, repeats, PD.count(r.shuffles, 'shuffle'), `seed ${r.seed}`);
    if (!r.balance) parts.push('classes not balanced');
    if (r.pairwise) parts.push('every pair of conditions also decoded on its own');
    parts.push(`label '${r.columns.label}'` + (r.columns.group ? `, groups '${r.columns.group}'` : '') +
      (r.columns.pseudo ? `, pseudo-trials across '${r.columns.pseudo}'` : ''));
    // A chosen set of neurons is part of where a result came from (two runs on different sets must not read alike).
    const names = (list) => list.slice(0, 8).map((n) => `'${n}'`).join(', ') + (list.length > 8 ? ` and ${list.length - 8} more` : '');
    if (Array.isArray(r.columns.features)) parts.push(`features ${names(r.columns.features)} only`);
    else if (r.columns.ignore && r.columns.ignore.length) parts.push(`every feature but ${names(r.columns.ignore)}`);
    if (r.time) {
      const t = r.time.input;
      if (t.width !== undefined) parts.push(`windows ${t.width} s every ${t.step} s from ${t.start} to ${t.end} s`);
      if (r.time.generalize) parts.push('temporal generalization');
      if (r.time.generalization_null) parts.push(PD.NULL_WORDS[r.time.generalization_null]);
    }
    parts.push(...PD.describeMore(r));
    return parts.join('; ');
  };

  // What differs between two recipes, in the form's words.
  PD.recipeChanges = function (was, now) {
    const out = [];
    const same = (a, b) => JSON.stringify(a) === JSON.stringify(b);
    const named = [['classifier', 'Decoder'], ['c', 'C'], ['tune', 'Choose settings inside each training fold'],
      ['folds', 'Folds'], ['repeats', 'Repeats'], ['balance', 'Balance classes'], ['shuffles', 'Shuffles'],
      ['shuffle_repeats', 'Repeats per shuffle'], ['seed', 'Seed'], ['pairwise', 'Also decode every pair of conditions']];
    // In the form's words: a decoder by its name on the form, an unset column as "(none)", a default as such.
    const show = (v) => (v === null || v === undefined ? '(none)' : v === true ? 'on' : v === false ? 'off' : String(v));
    const shown = (k, v) => (k === 'classifier' && PD.DECODER_NAMES[v] ? PD.DECODER_NAMES[v]
      : k === 'shuffle_repeats' && (v === null || v === undefined) ? 'default' : show(v));
    // A switch left out of a recipe is off.
    const flag = (k, v) => (k === 'pairwise' ? !!v : v);
    for (const [key, name] of named) if (!same(flag(key, was[key]), flag(key, now[key]))) out.push(`${name} (${shown(key, flag(key, was[key]))} → ${shown(key, flag(key, now[key]))})`);
    const cols = [['label', 'Label column'], ['group', 'Group column'], ['pseudo', 'separate sessions'], ['drop_missing', 'Drop trials with missing values']];
    for (const [key, name] of cols) if (!same(was.columns[key], now.columns[key])) out.push(`${name} (${show(was.columns[key])} → ${show(now.columns[key])})`);
    if (!same(was.columns.features, now.columns.features) || !same(was.columns.ignore || [], now.columns.ignore || [])) out.push('Feature columns');
    const wt = was.time || {}; const nt = now.time || {};
    if (!same(wt.input, nt.input)) out.push('the time settings (columns, windows or units)');
    if (!same(wt.generalize, nt.generalize)) out.push('Temporal generalization');
    const nullWords = (v) => (v === 'all-labels' ? 'every label shuffled' : v ? 'training labels shuffled' : 'none');
    if (wt.generalize && nt.generalize && !same(wt.generalization_null, nt.generalization_null)) {
      out.push(`Null for the generalization matrix (${nullWords(wt.generalization_null)} → ${nullWords(nt.generalization_null)})`);
    }
    if (!same(wt.alpha, nt.alpha)) out.push(`Cluster α (${show(wt.alpha)} → ${show(nt.alpha)})`);
    out.push(...PD.moreChanges(was, now));
    return out;
  };
}(window.PD));
