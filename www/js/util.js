// Shared helpers and the page's one namespace, PD. Every file of www/js/ adds its part to PD; index.html loads them
// in order (and scripts/bundle-offline.mjs inlines them in the same order), so no bundler or loader is needed.
// Everything taken from the user's file is inserted with textContent or as an <img> of core-escaped SVG, never as
// HTML.
'use strict';
window.PD = { state: {}, views: {} };
(function (PD) {
  PD.$ = (id) => document.getElementById(id);

  PD.el = function (tag, text, cls) {
    const e = document.createElement(tag);
    if (text !== undefined && text !== null) e.textContent = String(text);
    if (cls) e.className = cls;
    return e;
  };

  PD.option = function (value, text, selected) {
    const o = PD.el('option', text);
    o.value = value;
    o.selected = !!selected;
    return o;
  };

  PD.button = function (text, onClick, label) {
    const b = PD.el('button', text);
    b.type = 'button';
    if (label) b.setAttribute('aria-label', label);
    b.addEventListener('click', onClick);
    return b;
  };

  // A no-break space keeps "%" on the line of its number.
  PD.pct = (v) => (100 * v).toFixed(1) + '\u00a0%';
  // The core's texts write "25.0 %" with a plain space; where the page wraps such a text in a narrow place (the
  // runs list), the number and its "%" are kept together.
  PD.unbroken = (text) => text.replace(/(\d) %/g, '$1\u00a0%');
  // A p- or q-value written as the core's text writes it (crate/report/text.rs `p_text`): three decimals, or two
  // significant digits in exponent form below 0.001, so the page's tables and its headline agree.
  PD.pText = (v) => (v === null || v === undefined ? '—' : v < 0.001 ? v.toExponential(1) : v.toFixed(3));
  // A permutation p-value from `m` permutations: "≤ 0.005" at its floor 1/(m + 1), where no permutation reached the
  // observed statistic and p is a bound, not an estimate (the core's `report::text::at_floor`).
  PD.pBound = (v, m) => (v !== null && v !== undefined && m > 0 && Math.abs(v * (m + 1) - 1) < 1e-9 ? '≤ ' : '') + PD.pText(v);
  PD.bytes = (n) => (n >= 1e9 ? (n / 1e9).toFixed(1) + ' GB' : n >= 1e6 ? (n / 1e6).toFixed(1) + ' MB'
    : Math.max(1, Math.round(n / 1e3)) + ' kB');
  PD.seconds = (s) => (s < 1 ? 'under a second' : s < 90 ? Math.round(s) + ' s' : s < 5400 ? Math.round(s / 60) + ' min'
    : (s / 3600).toFixed(1) + ' h');
  // An estimate in words: "about 12 s", or "under a second" (never "about under a second").
  PD.about = (s) => (s < 1 ? PD.seconds(s) : `about ${PD.seconds(s)}`);
  PD.count = (n, one, many) => `${n.toLocaleString('en')} ${n === 1 ? one : (many || one + 's')}`;
  PD.stem = (name) => String(name || 'data').replace(/\.[^.]*$/, '');
  PD.clock = (date) => date.toTimeString().slice(0, 8);

  PD.download = function (name, contents, type) {
    const blob = contents instanceof Blob ? contents : new Blob([contents], { type });
    const url = URL.createObjectURL(blob);
    const a = PD.el('a');
    a.href = url; a.download = name;
    document.body.appendChild(a); a.click(); a.remove();
    setTimeout(() => URL.revokeObjectURL(url), 1000);
  };

  PD.showError = function (id, message) { const box = PD.$(id); box.textContent = PD.pageWords(message); box.hidden = false; };
  PD.clearError = function (id) { const box = PD.$(id); box.textContent = ''; box.hidden = true; };

  // The page's names for the command line's flags: a message from the core may name a flag (the CLI's words), and
  // the page says the setting instead. FLAG_FIELDS says which field a message about that flag belongs beside.
  const SETTING_NAMES = {
    'drop-missing': '“Drop trials with missing values”', ignore: 'the feature list', folds: '“Folds”',
    repeats: '“Repeats”', shuffles: '“Shuffles”', 'shuffle-repeats': '“Repeats per shuffle”', seed: '“Seed”',
    c: '“C”', classifier: '“Decoder”', label: '“Label column”', group: '“Group column”', features: '“Feature columns”',
    width: '“Window width”', step: '“Window step”', start: '“From”', end: '“To”', alpha: '“Cluster α”',
    generalize: '“Temporal generalization”', tune: '“Choose settings inside each training fold”',
    'no-balance': '“Balance classes”', pseudo: '“Neurons recorded in separate sessions?”', trial: '“Trial column”',
    time: '“Time column”', neuron: '“Neuron column”', align: '“Alignment column”', units: '“Keep units by”',
    draws: '“random subsets per size”', recipe: 'the recipe', pairwise: '“Also decode every pair of conditions”',
    'generalization-null': '“Null for the generalization matrix”',
  };
  PD.FLAG_FIELDS = {
    folds: 'folds', repeats: 'repeats', shuffles: 'shuffles', 'shuffle-repeats': 'shuffle-repeats', seed: 'seed',
    c: 'c', width: 'width', step: 'step', start: 't-start', end: 't-end', alpha: 'alpha', draws: 'draws',
    label: 'label', group: 'group', trial: 'trial-col', time: 'time-col', neuron: 'neuron-col', align: 'align-col',
    units: 'unit-col', pseudo: 'pseudo', pairwise: 'pairwise', 'generalization-null': 'generalization-null',
  };

  // A message in the page's words: no command-line flag, no parser's vocabulary (serde's "missing field `x`",
  // "expected usize at line 1 column 195").
  PD.pageWords = function (message) {
    let m = String(message && message.message !== undefined ? message.message : message);
    m = m.replace(/\(--drop-missing\)/g, '(tick “Drop trials with missing values”)')
      .replace(/leave it out \(--ignore '[^']*'\)/g, 'leave it out (untick it in the feature list)')
      .replace(/among the features \(--features\)/g, 'among the features (tick it in the feature list)')
      .replace(/name the feature columns \(--features\)/g, 'choose the feature columns')
      .replace(/so this looks like a table with one row per trial rather than one row per trial and time bin/g,
        'so this looks like a table with one row per trial: choose “one row per trial” under “What the data hold”, or the column of bin times')
      .replace(/Decode it with a regression decoder \(ridge regression, or circular ridge regression for an angle\), or choose a column of conditions as the label/g,
        'To decode it, use “Decode a continuous variable” further down; to decode classes, choose a column of conditions as the label')
      .replace(/--([a-z][a-z-]*)/g, (_, f) => SETTING_NAMES[f] || 'the matching setting');
    const kinds = { usize: 'a whole number', u64: 'a whole number', f64: 'a number', 'a boolean': 'yes or no',
      'a string': 'text', 'a sequence': 'a list', bool: 'yes or no' };
    const kind = (k) => kinds[k.trim()] || 'another kind of value';
    // A parser's message says where it stopped (the core's "not a valid recipe: …", or serde's own "at line 1
    // column 45"); a result's caution never does, so its words (e.g. "is expected to be lower") are left alone.
    const parser = /not a valid |at line \d+ column \d+/.test(m);
    m = m.replace(/missing field `([^`]*)`/g, 'the setting “$1” is missing')
      .replace(/unknown field `([^`]*)`, expected[^.;]*/g, '“$1” is not a setting popdecode knows')
      .replace(/unknown variant `([^`]*)`, expected[^.;]*/g, '“$1” is not one of the accepted values')
      .replace(/invalid type: ([^,]*), expected ([^.;]*?)(?= at line|$|[.;])/g, (_, got, want) => `a setting holds ${got.replace(/^(integer|floating point|string|map|sequence|boolean)\s*/, '').replace(/`/g, '') || 'a value'} where ${kind(want)} is needed`)
      .replace(/invalid value: ([^,]*), expected ([^.;]*?)(?= at line|$|[.;])/g, (_, got, want) => `a setting holds ${got.replace(/`/g, '')} where ${kind(want)} is needed`)
      .replace(/ at line \d+ column \d+/g, '')
      .replace(/\b(expected|EOF while parsing)[^.;]*/g, (s) => (!parser ? s : /EOF/.test(s) ? 'the file ends too early' : 'the file is not in the expected form'))
      .replace(/`/g, '“');
    return m;
  };

  // The field a core message is about, from the flag it names (or null).
  PD.fieldOf = function (message) {
    const f = String(message).match(/--([a-z][a-z-]*)/);
    return f && PD.FLAG_FIELDS[f[1]] ? PD.FLAG_FIELDS[f[1]] : null;
  };

  // A tiny publish/subscribe so that files by concern do not call each other in circles.
  const listeners = {};
  PD.on = (name, f) => { (listeners[name] = listeners[name] || []).push(f); };
  PD.emit = (name, ...args) => (listeners[name] || []).forEach((f) => f(...args));
}(window.PD));
