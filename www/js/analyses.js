// The analyses offered beside the main decoding, in the page's words: generalization across conditions ("Does the
// code carry over between conditions?"), continuous decoding ("Decode a continuous variable") and the power
// analysis ("Plan the next recording"). Each entry of PD.ANALYSES reads its own fields: `problems()` (each beside
// its field) and `recipe(r)` (its settings written into the run's recipe, so the recipe saved with a record
// reproduces the run on the command line). Also: how run workers get an analysis's files (PD.sendFiles), and the
// analysis kinds' words for records and stale marking.
/* global wasm_bindgen */
'use strict';
(function (PD) {
  const { $, option } = PD;
  const S = PD.state;

  Object.assign(PD.KIND_WORDS, {
    study: 'sessions and animals compared (study)', across: 'carried over between conditions',
    continuous: 'a continuous variable decoded', power: 'planning the next recording',
  });
  Object.assign(PD.DECODER_NAMES, { ridge: 'ridge regression', 'circular-ridge': 'circular ridge regression' });

  // Which data an analysis kind reads (wasm/data.rs `family`): the decoded trial table or time course, or the
  // files themselves.
  PD.family = (kind) => (['study', 'across', 'continuous'].includes(kind) ? 'files' : kind === 'time' ? 'time' : 'table');

  // A file's name without the folders a study table may give it.
  PD.baseName = (name) => String(name).split(/[\\/]/).pop();

  const WHOLE = /^\s*\d+\s*$/;
  const NUMBER = /^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$/;
  // A comma-separated list of values, blanks dropped.
  const list = (id) => $(id).value.split(',').map((v) => v.trim()).filter((v) => v !== '');
  // A comma-separated list of whole numbers (null when empty); a problem is pushed when one is not.
  function wholeList(id, name, min, problems) {
    const values = list(id);
    if (!values.length) return null;
    if (values.some((v) => !WHOLE.test(v) || Number(v) < min)) {
      problems.push([id, `${name}: whole numbers of at least ${min}, separated by commas.`]);
      return null;
    }
    return values.map(Number);
  }
  function whole(id, name, min, problems) {
    const v = $(id).value;
    if (!WHOLE.test(v) || Number(v) < min) { problems.push([id, `${name} must be a whole number, ${min} or more.`]); return min; }
    return Number(v);
  }

  const across = () => {
    const problems = [];
    const train = list('across-train');
    const test = list('across-test');
    if (!$('across-col').value) problems.push(['across-col', 'Choose the column whose levels split training from testing.']);
    if ((train.length === 0) !== (test.length === 0)) {
      problems.push([train.length ? 'across-test' : 'across-train', 'Give the levels to train on and the levels to test on, or neither (every even split).']);
    }
    const shared = train.filter((v) => test.includes(v));
    if (shared.length) problems.push(['across-test', `A level cannot be both trained and tested on: ${shared.join(', ')}.`]);
    return { problems, settings: { column: $('across-col').value, assignments: train.length && test.length ? [{ train, test }] : [] } };
  };

  const power = () => {
    const problems = [];
    const settings = {
      trials: wholeList('power-trials', 'Trials per class to try', 1, problems),
      neurons: wholeList('power-neurons', 'Neurons to keep', 1, problems),
      noise: wholeList('power-noise', 'Noise neurons to add', 0, problems),
      subsamples: whole('power-subsamples', 'Subsamples per size', 1, problems),
      alpha: 0.05,
      extrapolate_to: null,
    };
    const a = $('power-alpha').value;
    if (!NUMBER.test(a) || !(Number(a) > 0 && Number(a) < 1)) problems.push(['power-alpha', 'The significance level must be a number between 0 and 1 (for example 0.05).']);
    else settings.alpha = Number(a);
    if ($('power-extrapolate').value.trim() !== '') settings.extrapolate_to = whole('power-extrapolate', 'Extrapolate to', 1, problems);
    // Sizes left empty are chosen from the data (the recipe leaves them out).
    ['trials', 'neurons', 'noise', 'extrapolate_to'].forEach((k) => { if (settings[k] === null) delete settings[k]; });
    const protocol = { repeats: whole('power-repeats', 'Repeats per subsample', 1, problems), shuffles: whole('power-shuffles', 'Shuffles per subsample', 1, problems) };
    return { problems, settings, protocol };
  };

  PD.ANALYSES = {
    across: {
      problems: () => across().problems,
      recipe: (r) => { r.across = across().settings; },
    },
    continuous: {
      problems: () => [],
      recipe: (r) => {
        r.classifier = $('value-decoder').value;
        r.tune = false;
        if (r.classifier === 'circular-ridge') r.angle_unit = $('angle-unit').value;
      },
    },
    power: {
      problems: () => power().problems,
      recipe: (r) => {
        const p = power();
        r.repeats = p.protocol.repeats;
        r.shuffles = p.protocol.shuffles;
        r.power = p.settings;
      },
    },
  };

  // The options (JSON text) a run of `kind` is started with: a study's, from its own fields (study.js).
  PD.runOptions = (kind) => (kind === 'study' ? PD.studyOptions() : '');

  // The button that starts a record's kind of run again.
  // A study whose sessions were scored by generalization across conditions is started by the same button.
  PD.startKind = (record) => (record.kind === 'study' && record.recipe.across ? 'across'
    : record.kind === 'compare' || record.kind === 'neurons' || PD.ANALYSES[record.kind] ? record.kind : 'main');

  // What a record's run was, in words (a study scored by generalization across conditions says so).
  PD.kindWords = (record) => PD.KIND_WORDS[record.kind] +
    (record.kind === 'study' && record.recipe.across ? ', each session carried over between conditions' : '');

  // The analysis a button starts on the current data: in a study, generalization across conditions is the study
  // itself with each session scored by it.
  PD.analysisOf = (kind) => (kind === 'neurons' ? 'neurons'
    : kind === 'across' && S.kind === 'study' ? 'study' : PD.ANALYSES[kind] ? kind : PD.mainKind());

  // The settings of these analyses in words, for a record's heading.
  PD.describeMore = function (r) {
    const parts = [];
    if (r.across) {
      parts.push(`trained and tested across '${r.across.column}' (` + (r.across.assignments.length
        ? r.across.assignments.map((a) => `train ${a.train.join(', ')}, test ${a.test.join(', ')}`).join('; ')
        : 'every even split of its levels') + ')');
    }
    if (r.angle_unit) parts.push(`angles in ${r.angle_unit}`);
    if (r.power) {
      const p = r.power;
      parts.push(`power: ${p.trials ? 'trials per class ' + p.trials.join(', ') : 'trials per class from the data'}, ` +
        `${p.neurons ? 'neurons ' + p.neurons.join(', ') : 'neuron counts from the data'}, ` +
        `${p.noise ? 'noise neurons ' + p.noise.join(', ') : 'noise neurons from the data'}; ${PD.count(p.subsamples, 'subsample')} per size, α = ${p.alpha}` +
        (p.extrapolate_to ? `, extrapolated to ${p.extrapolate_to} trials per class` : ''));
    }
    return parts;
  };

  // What differs between two recipes in these analyses' settings, in the form's words.
  PD.moreChanges = function (was, now) {
    const same = (a, b) => JSON.stringify(a ?? null) === JSON.stringify(b ?? null);
    const out = [];
    if (!same(was.across, now.across)) out.push('the condition column or its levels');
    if (!same(was.angle_unit, now.angle_unit)) out.push('Angles in');
    if (!same(was.power, now.power)) out.push('the sizes to try when planning the next recording');
    return out;
  };

  // The run workers of an analysis that reads files get the files themselves, one after the other (each file's
  // bytes copied once out of the data worker and transferred).
  PD.sendFiles = async function (worker, names, analysis, req, token) {
    const bytes = [];
    for (let i = 0; i < names.length; i++) {
      bytes.push(await S.data.ask('file', { ...req, index: i }));
      if (token.cancelled) throw new Error('cancelled');
    }
    await worker.ask('run-init-files', { module: S.module, kind: analysis, names, files: bytes, recipe: req.recipe, options: req.options },
      bytes.map((b) => b.buffer));
    if (token.cancelled) throw new Error('cancelled');
  };

  // The condition column offers the label-like columns of the data (text, or a handful of values).
  function fillAcross() {
    const info = PD.mainInfo();
    const select = $('across-col');
    const was = select.value;
    select.replaceChildren(option('', '(choose a column)', !was));
    if (!info) return;
    const headers = info.headers || [];
    headers.forEach((h, i) => {
      const c = info.columns[i];
      if (c && (!c.numeric || (c.values && c.values.length <= 12))) select.appendChild(option(h, h, h === was));
    });
    fillLevels();
  }
  function fillLevels() {
    const info = PD.mainInfo();
    const box = $('across-levels');
    box.replaceChildren();
    if (!info) return;
    const i = (info.headers || []).indexOf($('across-col').value);
    if (i >= 0 && info.columns[i].values) info.columns[i].values.forEach(([v]) => box.appendChild(option(v, v, false)));
  }

  let powerFilled = false;
  // The power fields start from the core's defaults (default_power_recipe), once the core has started.
  function fillPowerDefaults() {
    if (powerFilled || typeof wasm_bindgen.default_power_recipe !== 'function') return;
    powerFilled = true;
    const r = JSON.parse(wasm_bindgen.default_power_recipe('label'));
    $('power-subsamples').value = r.power.subsamples;
    $('power-alpha').value = r.power.alpha;
    $('power-repeats').value = r.repeats;
    $('power-shuffles').value = r.shuffles;
  }

  // Called by PD.updateButtons: `ok` is whether the current data and settings can run as a decoding of classes.
  // Generalization across conditions and continuous decoding have designs of their own (a numeric label has no
  // classes), so they need only the data and a form without problems; the core checks their design at the run.
  PD.updateAnalysisButtons = function (ok) {
    fillPowerDefaults();
    const formOk = PD.dataReady() && S.check && !S.check.problems.length;
    const off = !formOk || !!S.run;
    $('across-start').disabled = off;
    $('continuous-start').disabled = off || S.kind === 'study';
    $('power-start').disabled = !ok || !!S.run || S.kind !== 'table';
  };

  // An analysis's example (invented data, samples/): loaded as a trial table, its label chosen and the analysis's
  // own fields set by `then`, so one more click (on `button`) runs it.
  async function loadExample(name, label, button, then, note = '') {
    await PD.loadInto('table', await PD.sampleFile(name));
    if (!PD.mainInfo()) return;
    $('label').value = label;
    $('label').dispatchEvent(new Event('change'));
    then();
    $('data-status').textContent = `Loaded the example ${name} with '${label}' as the label; ` +
      `“${$(button).textContent.trim()}” (under More analyses of these data) runs it.${note}`;
    PD.markStale();
  }

  window.addEventListener('DOMContentLoaded', () => {
    PD.on('data', fillAcross);
    $('across-col').addEventListener('change', () => { fillLevels(); PD.markStale(); });
    ['across-train', 'across-test', 'value-decoder', 'angle-unit', 'power-trials', 'power-neurons', 'power-noise',
      'power-subsamples', 'power-alpha', 'power-extrapolate', 'power-repeats', 'power-shuffles'].forEach((id) => {
      $(id).addEventListener('change', () => { PD.fieldProblem(id, ''); PD.markStale(); });
    });
    const angle = () => { $('angle-unit').disabled = $('value-decoder').value !== 'circular-ridge'; };
    $('value-decoder').addEventListener('change', angle);
    angle();
    ['across', 'continuous', 'power'].forEach((kind) => {
      $(kind + '-start').addEventListener('click', (e) => PD.start(kind, e.detail === 0));
    });
    $('example-across').addEventListener('click', () => loadExample('choices.csv', 'choice', 'across-start', () => {
      $('across-col').value = 'context';
      fillLevels();
    }));
    // The table also holds the heading, a second behavioural variable, not a neuron: it is left out of the
    // features, as samples/README.md says to (the label's own column is never one).
    $('example-continuous').addEventListener('click', () => loadExample('running.csv', 'speed', 'continuous-start', () => {
      $('value-decoder').value = 'ridge';
      angle();
      PD.syncFeatures();
      PD.setFeatures(S.features.names.filter((n) => n !== 'heading'));
      PD.refresh();
    }, ' The column \'heading\', another behavioural variable, is left out of the features.'));
  });
}(window.PD));
