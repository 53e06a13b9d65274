// Say what will happen before it happens: on every change, the data worker checks the design against the current
// settings (off the main thread, the latest change wins); the page shows the trials per class, the
// cross-validation scheme in words, whether every repeat would be identical, the number of fits with an estimated
// duration (from tasks timed on this computer) and, for large data, the memory a run will need.
'use strict';
(function (PD) {
  const { $, el } = PD;
  const S = PD.state;
  S.check = null; // { seq, recipe, plan, header, problems, error }
  let seq = 0;
  let timer = null;
  let inflight = null; // the latest check, while it runs
  // What sets the speed of a fit -> { observed, shuffled }: milliseconds per fit on the real labels and on shuffled
  // ones, each measured once. They differ: a linear SVM's fit on shuffled labels took five times as long as on the
  // real ones (1000 trials × 400 neurons, this project's CLI, 2026-12-04), since nothing separates the classes.
  const rates = new Map();
  // A task of the core's plan is a repeat or a shuffle ({"kind": "shuffle", "index": j}), alone or inside a pair's
  // or a session's task (crate/resample/scheme.rs `Task`).
  const isShuffle = (task) => JSON.stringify(task).includes('"kind":"shuffle"');
  // Milliseconds the whole plan takes on one worker, from the measured rates; undefined while one it needs is unknown.
  function planMs(plan, rate) {
    if (!rate) return undefined;
    const ms = plan.tasks.reduce((sum, t, i) => sum + plan.fits[i] * (isShuffle(t) ? rate.shuffled : rate.observed), 0);
    return Number.isFinite(ms) ? ms : undefined;
  }

  // The analysis kind a recipe runs as on the main button.
  PD.mainKind = () => (S.kind === 'study' ? 'study' : PD.isTime() ? 'time' : 'table');

  // The data worker's cache key: what the file is read for (columns and time input), not the resampling settings.
  PD.loadKey = (kind, recipe) => JSON.stringify([S.generation, PD.family(kind), recipe.columns,
    recipe.time ? recipe.time.input : null]);

  PD.request = (kind, recipe, options) => ({
    kind, dataKind: S.kind, key: PD.loadKey(kind, recipe), recipe: JSON.stringify(recipe), options: options || '',
  });

  PD.refresh = function () {
    clearTimeout(timer);
    timer = setTimeout(() => { timer = null; inflight = check(); }, 150);
    PD.updateButtons();
  };

  PD.updateButtons = function () {
    const ok = PD.dataReady() && S.check && !S.check.error && !S.check.problems.length && S.check.plan;
    $('start').disabled = !ok || !!S.run;
    $('compare-start').disabled = !ok || !!S.run;
    $('neurons-start').disabled = !ok || !!S.run || S.kind !== 'table';
    $('compare-start').disabled ||= S.kind === 'study';
    PD.updateAnalysisButtons(ok);
    $('cancel').disabled = !S.run;
  };

  async function check() {
    PD.syncFeatures();
    const c = $('classifier').value;
    $('c').disabled = !PD.WITH_C.includes(c) || $('tune').checked;
    $('tune').disabled = !PD.WITH_C.includes(c);
    $('generalization-null').disabled = !$('generalize').checked;
    PD.saveSettings();
    const mine = ++seq;
    const { recipe, problems } = PD.readRecipe();
    PD.showProblems(problems);
    S.check = { seq: mine, recipe, plan: null, header: null, problems, error: null };
    PD.showCli($('cli-line'), recipe);
    // The analyses beside the main decoding run the same recipe with their own settings: each says its own line.
    ['across', 'continuous'].forEach((kind) => {
      const r = structuredClone(recipe);
      PD.ANALYSES[kind].recipe(r);
      PD.showCli($(`${kind}-cli-line`), r);
    });
    PD.emit('checked');
    if (!PD.dataReady()) { drawPlan(); PD.updateButtons(); return; }
    if (problems.length) { drawPlan(); PD.updateButtons(); return; }
    $('estimate').textContent = 'Checking the settings against the data…';
    const kind = PD.mainKind();
    const speedKey = JSON.stringify([S.generation, kind, recipe.columns, recipe.time, recipe.classifier, recipe.c,
      recipe.tune, recipe.folds, recipe.balance]);
    try {
      if (kind === 'study') await PD.listSessions(recipe, () => mine !== seq);
      if (mine !== seq) return;
      const req = PD.request(kind, recipe, PD.runOptions(kind));
      const answer = await S.data.ask('prepare', { ...req, withHeader: true });
      if (mine !== seq) return;
      S.check.plan = answer.plan;
      S.check.header = answer.header;
      S.check.speedKey = speedKey;
      S.check.msTotal = planMs(answer.plan, rates.get(speedKey));
      // No timing beside a run (a run asked for while its settings are being timed waits for it: PD.settle), and
      // a run's timing of its own tasks (PD.costOfRun) is left to finish.
      if (!(S.run && !S.run.settling)) {
        if (S.check.msTotal === undefined) timeTasks(speedKey, kind, req, answer.plan, answer.header);
        else stopTiming();
      }
      PD.clearError('data-error');
    } catch (e) {
      if (mine !== seq) return;
      S.check.error = e.message;
      const field = PD.fieldOf(e.message);
      if (field) PD.fieldProblem(field, e.message); else PD.showError('data-error', e.message);
    }
    drawPlan();
    PD.updateButtons();
    PD.emit('checked');
  }

  // How long a fit takes on this computer, measured by running the plan's first task, and its first shuffle when it
  // has shuffles, in a worker of its own. A slow decoder on large data can take a minute for one task: in its own
  // worker it never holds up the checks of the settings that follow, and a change of what sets the speed stops it
  // (the latest change wins). No timing runs beside a run.
  let timing = null; // { key, shuffles, worker, done }
  function stopTiming() {
    if (timing) { timing.cancelled = true; timing.worker.terminate(); }
    timing = null;
  }
  PD.timingNow = () => timing !== null;
  // Cancel stops the timing of a run's own tasks (PD.costOfRun), not that of the settings on the form.
  PD.stopRunTiming = () => { if (timing && !(S.check && timing.key === S.check.speedKey)) stopTiming(); };
  // A run asked for while its settings are being timed waits for the estimate (so a long run still asks first);
  // any other timing stops, to leave the cores to the run (PD.settle).
  // A run starts from the check of the settings as they are at the click: a change still waiting to be checked is
  // checked now, a check under way is waited for, and then the timing of these settings.
  PD.settle = async function () {
    if (timer !== null) {
      clearTimeout(timer);
      timer = null;
      inflight = check();
    }
    if (inflight) await inflight;
    if (timing && S.check && timing.key === S.check.speedKey) await timing.done;
    else stopTiming();
  };

  // The fastest of a task's runs, in milliseconds. The first runs of a task are slower than the rest: the browser
  // starts WebAssembly on quickly compiled code and swaps in optimised code as functions get hot (measured in
  // Chromium 156 on the example: 14.5, 11.8, 10.3, 7.0 … ms, settling at 3.6 ms after about ten runs, which had made
  // the estimate twice the run's time). So a short task is run again until about 0.4 s has gone by; a long one runs
  // once.
  async function fastestRun(mine, task) {
    let ms = Infinity;
    for (let spent = 0, runs = 0; spent < 400 && runs < 40 && timing === mine; runs++) {
      const t0 = performance.now();
      await mine.worker.ask('tasks', { tasks: [task] });
      const took = performance.now() - t0;
      ms = Math.min(ms, took);
      spent += took;
    }
    return ms;
  }

  // `growing`: the plan's tasks grow along it (subsamples of more trials or neurons: planning the next recording,
  // the neurons' analysis), so the first task alone would make the estimate too short (measured: a planning run
  // estimated under a minute took two); the last task is timed too and the two rates averaged.
  async function timeTasks(key, kind, req, plan, header, growing = false) {
    const shuffle = plan.tasks.findIndex(isShuffle);
    if (timing && timing.key === key && (shuffle < 0 || timing.shuffles)) return;
    stopTiming();
    if (!plan.tasks.length) return;
    const mine = { key, shuffles: shuffle >= 0, worker: new PD.DataWorker(S.module, S.data), cancelled: false };
    let finished;
    mine.done = new Promise((ok) => { finished = ok; });
    timing = mine;
    try {
      if (header.family === 'files') await PD.sendFiles(mine.worker, header.files, kind, req, mine);
      else {
        mine.bytes = await PD.sendMatrix(mine.worker, JSON.stringify(header), req, mine);
        await mine.worker.ask('run-init', { kind, recipe: req.recipe, options: req.options });
      }
      const rate = { ...rates.get(key) };
      if (rate.observed === undefined) {
        rate.observed = await fastestRun(mine, plan.tasks[0]) / Math.max(1, plan.fits[0]);
        const last = plan.tasks.map(isShuffle).lastIndexOf(false);
        if (growing && last > 0 && timing === mine) {
          rate.observed = (rate.observed + await fastestRun(mine, plan.tasks[last]) / Math.max(1, plan.fits[last])) / 2;
        }
      }
      if (shuffle >= 0 && rate.shuffled === undefined && timing === mine) {
        rate.shuffled = await fastestRun(mine, plan.tasks[shuffle]) / Math.max(1, plan.fits[shuffle]);
      }
      if (timing !== mine) return;
      rates.set(key, rate);
      mine.timed = true;
    } catch (_) {
      // Stopped by a newer check, or the task failed (the run will say why): no estimate.
      if (timing !== mine) return;
    } finally {
      finished();
    }
    // A worker that holds the data stays warm for the run that follows (PD.keepWarm decides).
    if (mine.timed && mine.bytes !== undefined) { timing = null; PD.keepWarm(mine.worker, req.key, mine.bytes); }
    else stopTiming();
    if (S.check && S.check.speedKey === key && S.check.plan) {
      S.check.msTotal = planMs(S.check.plan, rates.get(key));
      drawPlan();
    }
  }

  // The effective cross-validation scheme, in words, from the same rules as the core's Scheme::resolve
  // (crate/resample/scheme.rs): groups → grouped k folds when k < groups, else leave one group out; no groups →
  // leave-one-out for loo or k ≥ trials per repeat, else stratified k folds; pseudo-trials → k folds per session.
  PD.schemeWords = function (recipe, plan) {
    const groups = plan.group_names || [];
    const col = plan.group_column;
    const k = recipe.folds;
    const n = plan.trials_per_repeat;
    if (recipe.columns.pseudo) return { split: 'pseudo', text: `pseudo-trials built within ${k === 'loo' ? 'leave-one-out' : k + ' folds'} of every session's trials (${groups.length} sessions in '${recipe.columns.pseudo}')` };
    if (col) {
      if (k !== 'loo' && k < groups.length) return { split: 'grouped', text: `${k} folds, grouped by '${col}' (${groups.length} groups): no group is split between training and test` };
      return { split: 'logo', text: `leave one '${col}' out (${groups.length} groups held out in turn): Folds (${k}) is ${k === 'loo' ? 'leave-one-out' : 'at least the number of groups'}` };
    }
    if (k === 'loo') return { split: 'loo', text: `leave-one-out (${n} trials per repeat)` };
    if (k >= n) return { split: 'loo', text: `leave-one-out: ${k} folds is at least the ${n} trials per repeat` };
    return { split: 'stratified', text: `${k} folds, stratified (every class in the same proportion in every fold)` };
  };

  // Every repeat draws the same thing when no step is random: classes already equal (or not balanced), every
  // group (or trial) held out in turn, and no nested choice of settings with its own random folds.
  PD.repeatsIdentical = (recipe, plan, split) => ['logo', 'loo'].includes(split) && !recipe.tune &&
    (!recipe.balance || new Set(plan.class_counts).size === 1);

  // Rough memory of a run: the decoded matrix once in the data worker and, unless workers share memory, once per
  // worker, plus a training copy per worker while it fits.
  PD.memoryNeed = function (header, workers) {
    if (!header || header.family === 'files') return null;
    const cells = header.family === 'table' ? header.trials * header.features : header.windows_count * header.trials * header.neurons_count;
    const matrix = 8 * cells;
    const perWorker = (PD.shared ? 1 : 2) * matrix;
    return { matrix, total: matrix + perWorker * workers, perWorker };
  };
  const LARGE = 200e6;

  // The memory a run may use: half of what the browser says the device has (Chromium reports at most 8 GB;
  // Firefox says nothing, read as 8 GB), so at most 4 GB, and never more than a 32-bit wasm memory (4 GiB): per
  // worker when each holds its own copy of the matrix, for all of them together when they share one memory
  // (workers.js). With large data the pool is smaller than the cores, so the run fits.
  PD.memoryBudget = () => Math.min((navigator.deviceMemory || 8) * 1e9 / 2, PD.shared ? 2 ** 32 : Infinity);
  PD.workersFor = function (header, tasks) {
    const wanted = Math.max(1, Math.min(PD.poolSize(), tasks));
    const mem = PD.memoryNeed(header, 1);
    if (!mem) return { workers: wanted, limited: false };
    const fit = Math.max(1, Math.floor((PD.memoryBudget() - mem.matrix) / mem.perWorker));
    return { workers: Math.min(wanted, fit), limited: fit < wanted, wanted };
  };

  // What a plan costs on this computer: its fits, the workers it gets, its duration in seconds (null while
  // untimed) and, when large, its memory (else null).
  function costOf(plan, header, msTotal) {
    const fits = plan.fits.reduce((a, b) => a + b, 0);
    const pool = PD.workersFor(header, plan.tasks.length);
    const seconds = msTotal !== undefined ? msTotal / 1000 / PD.speedOf(pool.workers) : null;
    const mem = PD.memoryNeed(header, pool.workers);
    return { fits, pool, seconds, memory: mem && mem.total > LARGE ? mem : null };
  }

  // The cost of a run of another analysis than the main decoding (across conditions, a continuous variable, the
  // neurons), timed like the main one's (its own tasks: another analysis fits other training sets, or another
  // decoder), so that a long run of it asks first too. Called as the run starts; no other timing runs then.
  // -> { fits, seconds, memory }
  // `onTiming` is called when a task has to be timed first.
  PD.costOfRun = async function (analysis, recipe, options, onTiming) {
    const req = PD.request(analysis, recipe, options);
    const { plan, header } = await S.data.ask('prepare', { ...req, withHeader: true });
    const key = JSON.stringify([S.generation, analysis, req.recipe, req.options]);
    if (!rates.has(key)) {
      onTiming();
      await timeTasks(key, analysis, req, plan, header, ['power', 'neurons'].includes(analysis));
    }
    const cost = costOf(plan, header, planMs(plan, rates.get(key)));
    return { fits: cost.fits, seconds: cost.seconds, memory: cost.memory };
  };

  function drawPlan() {
    const box = $('classes');
    box.replaceChildren();
    const scheme = $('scheme');
    scheme.replaceChildren();
    const estimate = $('estimate');
    estimate.textContent = '';
    const c = S.check;
    if (!c || !c.plan) {
      if (!PD.dataReady()) estimate.textContent = 'Load data to run.';
      else if (c && c.problems.length) estimate.textContent = 'Some settings need attention (marked beside them).';
      else if (c && c.error && /reads as a continuous variable/.test(c.error)) {
        estimate.textContent = 'The label is a continuous variable: “Decode a continuous variable” further down decodes it. ' +
          'Decoding classes needs a column of conditions as the label.';
      } else if (c && c.error) {
        estimate.textContent = 'Nothing can run on the data as it is set up: the message in the Data section says why ' +
          'and what to change (a setting, such as the label, or the file itself).';
      }
      return;
    }
    const { plan, recipe } = c;
    if (S.kind === 'study') { PD.drawStudyPlan(c); return; }
    const time = PD.isTime();
    const max = Math.max(...plan.class_counts);
    const min = Math.min(...plan.class_counts);
    box.appendChild(el('h3', `Trials per class (${plan.trials} trials, ${plan.features} ${time ? 'neurons' : 'features'}` +
      (time ? `, ${plan.windows.length} windows from ${plan.windows[0].time} s to ${plan.windows[plan.windows.length - 1].time} s` : '') +
      (['events', 'nwb'].includes(S.kind) ? `, ${plan.spikes_total} spikes of which ${plan.spikes_outside} fall outside every window` : '') + ')'));
    const bars = el('div', null, 'bars');
    plan.classes.forEach((name, i) => {
      const n = plan.class_counts[i];
      const low = typeof recipe.folds === 'number' && n < recipe.folds && !plan.group_column;
      bars.appendChild(el('span', name, 'bar-name'));
      const bar = el('div', null, 'bar' + (low ? ' low' : ''));
      bar.style.width = (100 * n / max) + '%';
      bars.appendChild(bar);
      bars.appendChild(el('span', n + (low ? ' (fewer than folds)' : '')));
    });
    box.appendChild(bars);
    const notes = el('ul', null, 'warnings');
    if (min < max) {
      notes.appendChild(el('li', recipe.balance
        ? `Classes are unbalanced (${min} to ${max} trials): every repeat undersamples each class to ${min}.`
        : `Classes are unbalanced (${min} to ${max} trials) and balancing is off: balanced accuracy is the headline.`));
    }
    plan.warnings.forEach((w) => notes.appendChild(el('li', PD.pageWords(w))));
    box.appendChild(notes);

    const s = PD.schemeWords(recipe, plan);
    const p = el('p');
    p.appendChild(el('strong', 'Cross-validation: '));
    p.appendChild(document.createTextNode(s.text + '.'));
    scheme.appendChild(p);
    if (recipe.repeats > 1 && PD.repeatsIdentical(recipe, plan, s.split)) {
      const q = el('p', `Every repeat would be identical here (classes are equal and every ${s.split === 'loo' ? 'trial' : 'group'} is ` +
        `held out in turn), so a single repeat is run instead of ${recipe.repeats}, and one per shuffle. `, 'warning');
      q.id = 'identical-note';
      q.appendChild(PD.button('Use 1 repeat', () => { $('repeats').value = '1'; PD.refresh(); }));
      scheme.appendChild(q);
    }

    const { fits, pool, seconds, memory } = costOf(plan, c.header, c.msTotal);
    const workers = pool.workers;
    c.seconds = seconds;
    c.memory = memory;
    estimate.textContent = `${PD.count(fits, 'fit')} in ${PD.count(plan.tasks.length, 'task')} on ${PD.count(workers, 'worker')}` +
      (pool.limited ? ` (not ${pool.wanted}: ${PD.shared ? 'each worker needs room for its own training rows' : 'each worker holds its own copy of the data'}, and more would not fit in memory)` : '') +
      (seconds !== null ? `: ${PD.about(seconds)} on this computer` : timing ? ' (timing a task on this computer…)' : '') +
      (memory ? `; needs about ${PD.bytes(c.memory.total)} of memory (${PD.bytes(c.memory.perWorker)} per worker)` : '') + '.';
  }
}(window.PD));
