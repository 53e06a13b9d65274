// Runs and the worker pool. A run: settings checked, plan prepared by the data worker, confirmation when it is
// long or large, a pool of run workers each given the decoded matrix once (in transferred parts, one worker at a
// time, so copies do not pile up; workers holding small data are kept warm for the next run on it), tasks handed in
// batches to whichever worker is free, the outcome strings joined unparsed and finished by the data worker. Only a
// finished run becomes a record; a cancelled or failed one changes nothing on view. Cancel terminates the workers at
// once (running wasm cannot be interrupted), or, when they share memory, lets each finish the task it is on and
// close (workers.js says why); the page is free at once either way.
'use strict';
(function (PD) {
  const { $ } = PD;
  const S = PD.state;
  S.run = null;
  S.pool = [];
  // Run workers kept between runs, each { worker, key } holding the decoded data of `key` (PD.loadKey): a worker
  // costs about 40 ms to start and fill, as much as a whole run of a fast decoder on small data. Only small data
  // is kept (WARM_BYTES) when each worker holds a copy, so idle workers never hold much memory.
  S.warm = [];
  const WARM_BYTES = 8e6;

  function stopPool() {
    S.pool.forEach((w) => w.terminate());
    S.pool = [];
  }

  // Keep a worker that holds the data of `key` (`bytes` of matrix) for the next run, or stop it. A worker sharing
  // memory holds no copy of the data, so it is kept whatever the size.
  PD.keepWarm = function (worker, key, bytes) {
    if ((worker.memory || bytes <= WARM_BYTES) && S.warm.length < PD.poolSize()) S.warm.push({ worker, key, bytes });
    else worker.terminate();
  };

  // Stop every warm worker (the data they hold is forgotten; with shared memory, they share the forgotten data
  // set's memory, which goes when its last worker does).
  PD.stopWarm = () => takeWarm(null, 0);

  // The warm workers holding `key` (at most `n`, each { worker, key, bytes }); the others are stopped.
  function takeWarm(key, n) {
    const mine = [];
    S.warm.forEach((w) => { if (w.key === key && mine.length < n) mine.push(w); else w.worker.terminate(); });
    S.warm = [];
    return mine;
  }

  function endRun() {
    stopPool();
    S.run = null;
    $('progress').hidden = true;
    PD.updateButtons();
  }

  PD.cancel = function () {
    if (!S.run) return;
    S.run.cancelled = true;
    PD.stopRunTiming();
    endRun();
    $('confirm').hidden = true;
    $('progress-text').textContent = 'Cancelled. Nothing was kept from the stopped run; the results on view are unchanged.';
  };

  // Ask before a run longer than a minute or needing much memory; resolves true to go on.
  function confirmRun(text) {
    return new Promise((resolve) => {
      const box = $('confirm');
      $('confirm-text').textContent = text;
      box.hidden = false;
      const done = (answer) => {
        box.hidden = true;
        $('confirm-yes').onclick = null; $('confirm-no').onclick = null;
        resolve(answer);
      };
      $('confirm-yes').onclick = () => done(true);
      $('confirm-no').onclick = () => done(false);
      $('confirm-yes').focus();
    });
  }

  // What a run of another analysis than the main decoding is, for the question a long run asks first.
  const RUN_WORDS = {
    across: (r) => `Generalization across '${r.across.column}'`,
    continuous: (r) => `Decoding '${r.columns.label}' as a continuous variable`,
    neurons: () => 'The analysis of single neurons and subsets',
    power: () => 'Planning the next recording',
  };

  // The recipe and options each kind of run uses, from the form's recipe.
  PD.runRecipe = function (kind, base) {
    const recipe = JSON.parse(JSON.stringify(base));
    // Pairwise decoding belongs to the main decoding only; the neuron analyses test each neuron against the
    // shuffles only when asked (a shuffle test per neuron is many fits).
    if (kind !== 'main') delete recipe.pairwise;
    if (kind === 'neurons' && !$('neuron-shuffles').checked) recipe.shuffles = 0;
    if (kind === 'compare') { recipe.shuffles = 0; recipe.repeats = Math.min(recipe.repeats, 20); recipe.tune = false; }
    if (PD.ANALYSES[kind]) PD.ANALYSES[kind].recipe(recipe);
    return recipe;
  };

  // Start a run of `kind` ('main', 'compare' or 'neurons') from the form. `viaKeyboard`: focus goes to the
  // results heading when it is done.
  PD.start = async function (kind, viaKeyboard) {
    if (S.run || !PD.dataReady()) return;
    PD.clearError('run-error');
    const { recipe: base, problems } = PD.readRecipe();
    const draws = PD.readDraws();
    if (kind === 'neurons' && draws === null) problems.push(['draws', 'Random subsets per size must be a whole number, 1 or more.']);
    if (PD.ANALYSES[kind]) problems.push(...PD.ANALYSES[kind].problems());
    PD.showProblems(problems);
    if (problems.length) {
      const first = $(problems[0][0]);
      if (first) first.focus();
      return;
    }
    // `settling`: the run waits for the check and the timing of its settings (which may start one now).
    const token = { cancelled: false, settling: true };
    S.run = token;
    PD.updateButtons();
    if (kind === 'main' && PD.timingNow()) $('progress-text').textContent = 'Timing one task on this computer before starting…';
    await PD.settle();
    token.settling = false;
    if (token.cancelled || S.run !== token) return;
    $('progress-text').textContent = '';
    const generation = S.generation;
    const files = PD.currentFiles();
    try {
      let record;
      if (kind === 'compare') record = await compareRun(base, token);
      else {
        const analysis = PD.analysisOf(kind);
        const recipe = PD.runRecipe(kind, base);
        const options = kind === 'neurons' ? JSON.stringify({ draws }) : PD.runOptions(analysis);
        // A long or large run asks first, whichever analysis it is.
        let c = S.check && S.check.plan &&
          { fits: S.check.plan.fits.reduce((a, b) => a + b, 0), seconds: S.check.seconds, memory: S.check.memory };
        if (kind !== 'main') {
          c = await PD.costOfRun(analysis, recipe, options,
            () => { $('progress-text').textContent = 'Timing one task on this computer before starting…'; });
          $('progress-text').textContent = '';
          if (token.cancelled || S.run !== token) return;
        }
        if (c && ((c.seconds !== null && c.seconds > 60) || c.memory)) {
          const ok = await confirmRun((RUN_WORDS[kind] ? `${RUN_WORDS[kind](recipe)}: this run has ` : 'This run has ') +
            PD.count(c.fits, 'fit') +
            (c.seconds !== null ? ` and should take ${PD.about(c.seconds)} on this computer` : '') +
            (c.memory ? `; it needs about ${PD.bytes(c.memory.total)} of memory (${PD.bytes(c.memory.perWorker)} per worker; fewer workers need less: add ?workers=1 to the address)` : '') +
            (kind === 'main' ? '' : ' (the estimate beside the Decode button is the main decoding\'s)') + '. Start it?');
          if (!ok || token.cancelled) { if (S.run === token) endRun(); $('progress-text').textContent = 'Not started.'; return; }
        }
        const result = await runOnce(analysis, recipe, options, token, '');
        record = { kind: analysis, recipe, options, draws: kind === 'neurons' ? draws : null, result, seconds: result.seconds, workers: result.workers };
      }
      if (token.cancelled || S.run !== token) return;
      record.dataKind = S.kind;
      record.generation = generation;
      record.files = files;
      endRun();
      PD.addRecord(record, viaKeyboard);
    } catch (e) {
      if (token.cancelled || S.run !== token) return;
      endRun();
      $('progress-text').textContent = '';
      const field = PD.fieldOf(e.message);
      if (field) PD.fieldProblem(field, e.message);
      PD.showError('run-error', e.message);
    }
  };

  // A run worker's decoded data: the matrix in parts of 4 MB, each asked of the data worker and transferred on
  // (neither side ever holds a second whole copy of a large matrix), then the header. `token.cancelled` stops it.
  // Resolves to the matrix's size in bytes.
  const PART = 1 << 19; // values
  // When memory is shared, the worker takes the data by a ticket instead (nothing is copied).
  PD.sendMatrix = async function (worker, header, req, token) {
    if (worker.memory) {
      const { ticket, values } = await S.data.ask('share', req);
      if (token.cancelled) throw new Error('cancelled');
      await worker.ask('run-take', { ticket });
      if (token.cancelled) throw new Error('cancelled');
      return 8 * values;
    }
    let total = 1;
    for (let from = 0; from < total; from += PART) {
      const part = await S.data.ask('matrix-part', { ...req, from, len: PART });
      if (token.cancelled) throw new Error('cancelled');
      total = part.total;
      if (!total) break;
      await worker.ask('run-part', { module: S.module, total, values: part.values }, [part.values.buffer]);
      if (token.cancelled) throw new Error('cancelled');
    }
    await worker.ask('run-hold', { module: S.module, header });
    if (token.cancelled) throw new Error('cancelled');
    return 8 * total;
  };

  // One analysis on a fresh pool: resolves to the finished result (with seconds and workers).
  async function runOnce(analysis, recipe, options, token, label) {
    const req = PD.request(analysis, recipe, options);
    $('progress').hidden = false; $('progress').value = 0;
    $('progress-text').textContent = `${label}Preparing…`;
    const { plan, header } = await S.data.ask('prepare', { ...req, sample: false, withHeader: false })
      .then(async (a) => ({ plan: a.plan, header: await S.data.ask('header', req) }));
    if (token.cancelled) throw new Error('cancelled');
    const queue = plan.tasks.map((task, i) => ({ task, fits: plan.fits[i] }));
    const fitsTotal = plan.fits.reduce((a, b) => a + b, 0);
    const started = performance.now();
    const n = PD.workersFor(header ? JSON.parse(header) : null, queue.length).workers;
    const outcomes = [];
    let next = 0;
    let fitsDone = 0;
    $('progress-text').textContent = `${label}Starting ${PD.count(n, 'worker')}…`;
    // Each new worker gets the decoded matrix once, one after the other, and every worker the run (or, for an
    // analysis that reads files, the files themselves: PD.sendFiles); warm workers already hold the data.
    const files = header && JSON.parse(header).family === 'files' ? JSON.parse(header).files : null;
    const warm = takeWarm(files ? null : req.key, files ? 0 : n);
    const workers = warm.map((w) => w.worker);
    while (workers.length < n) workers.push(new PD.DataWorker(S.module, S.data));
    S.pool.push(...workers);
    let bytes = warm.length ? warm[0].bytes : Infinity;
    for (const worker of workers.slice(warm.length)) {
      if (files) await PD.sendFiles(worker, files, analysis, req, token);
      else bytes = await PD.sendMatrix(worker, header, req, token);
    }
    if (!files) {
      for (const worker of workers) {
        await worker.ask('run-init', { kind: analysis, recipe: req.recipe, options: req.options });
        if (token.cancelled) throw new Error('cancelled');
      }
    }
    const progress = () => {
      const frac = fitsDone / fitsTotal;
      $('progress').value = frac;
      const elapsed = (performance.now() - started) / 1000;
      const left = frac > 0 ? elapsed * (1 - frac) / frac : NaN;
      $('progress-text').textContent = `${label}${fitsDone.toLocaleString('en')} of ${fitsTotal.toLocaleString('en')} fits (${Math.round(100 * frac)}\u00a0%), ` +
        `${elapsed.toFixed(1)} s elapsed` + (Number.isFinite(left) ? `, about ${Math.ceil(left)} s left` : '');
    };
    // Tasks go out in batches: a message to a worker and back costs about a millisecond, as much as a whole task
    // of a fast decoder on small data. A batch is at most a twentieth of a worker's share (so progress moves
    // smoothly and the workers finish together) and, when the speed is known, about a tenth of a second of work.
    const msPerTask = S.check && S.check.msTotal !== undefined ? S.check.msTotal / queue.length : 0;
    const batch = Math.max(1, Math.min(Math.floor(queue.length / (20 * n)), msPerTask > 0 ? Math.floor(100 / msPerTask) : Infinity));
    await Promise.all(workers.map(async (worker) => {
      while (next < queue.length) {
        const ids = [];
        while (ids.length < batch && next < queue.length) ids.push(next++);
        const done = await worker.ask('tasks', { tasks: ids.map((id) => queue[id].task) });
        if (token.cancelled) throw new Error('cancelled');
        outcomes.push(...done);
        ids.forEach((id) => { fitsDone += queue[id].fits; });
        progress();
      }
    }));
    // The workers stay warm for the next run on the same data when it is small (an analysis that reads files
    // never: its workers hold the files, not the data).
    S.pool.forEach((worker) => PD.keepWarm(worker, req.key, files ? Infinity : bytes));
    S.pool = [];
    $('progress-text').textContent = `${label}Assembling the results…`;
    const result = await S.data.ask('finish', { ...req, outcomes: '[' + outcomes.join(',') + ']' });
    result.seconds = (performance.now() - started) / 1000;
    result.workers = n;
    $('progress-text').textContent = `Done: ${fitsTotal.toLocaleString('en')} fits in ${result.seconds.toFixed(1)} s on ${PD.count(n, 'worker')}.`;
    return result;
  }

  // Every decoder on the current settings, one after the other, without shuffles and with at most 20 repeats.
  PD.DECODERS = ['linear-svm', 'shrinkage-lda', 'logistic', 'gaussian-nb', 'poisson-nb', 'nearest-mean', 'rbf-svm'];
  async function compareRun(base, token) {
    const recipe = PD.runRecipe('compare', base);
    const rows = [];
    let seconds = 0;
    for (let i = 0; i < PD.DECODERS.length; i++) {
      const r = { ...recipe, classifier: PD.DECODERS[i] };
      try {
        const result = await runOnce(PD.mainKind(), r, '', token, `Comparing: ${PD.DECODER_NAMES[r.classifier]} (${i + 1} of ${PD.DECODERS.length}). `);
        seconds += result.seconds;
        rows.push({ classifier: r.classifier, report: result.report });
      } catch (e) {
        if (token.cancelled) throw e;
        rows.push({ classifier: r.classifier, error: e.message });
      }
    }
    $('progress-text').textContent = 'Comparison done.';
    return { kind: 'compare', recipe, options: '', result: { rows }, seconds, workers: Math.min(PD.poolSize(), 1e9) };
  }
}(window.PD));
