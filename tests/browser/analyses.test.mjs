// The analyses beside the main decoding, in the page: a study of many sessions, generalization across conditions,
// continuous decoding and planning the next recording. For each, the page's JSON is the command line's `--json`
// byte for byte on the invented samples, the view shows the report's figures, every warning and the methods, the
// record keeps every file with its SHA-256, and no request leaves the page.
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, readdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { createHash } from 'node:crypto';
import { serve, browser, closeAll, assertLocalOnly, shot, quickSettings, runAndWait, downloadText, download, cli, ROOT, SLOW } from './helpers.mjs';

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });

const tmp = mkdtempSync(join(tmpdir(), 'popdecode-browser-analyses-'));
const sample = (...p) => join(ROOT, 'samples', ...p);
const sha256 = (path) => createHash('sha256').update(readFileSync(path)).digest('hex');

async function openPage() {
  const b = await browser();
  await b.page.goto(`${server.origin}/index.html`);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  return b;
}

async function set(page, id, value) {
  await page.fill('#' + id, String(value));
  await page.dispatchEvent('#' + id, 'change');
}

/// A trial table loaded from samples/, its label chosen, small settings.
async function loadTable(name, label) {
  const b = await openPage();
  await b.page.setInputFiles('#file', sample(name));
  await b.page.waitForSelector('#data-view:not([hidden])');
  await b.page.selectOption('#label', label);
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  return b;
}

/// The JSON the command line writes with `args`.
function cliJson(name, args) {
  const out = join(tmp, name + '.json');
  cli([...args, '--quiet', '--json', out]);
  return readFileSync(out, 'utf8');
}

/// What every view of these analyses shows: figures drawn, every caution of the report, the methods paragraph, and
/// the record's files with the SHA-256 of the bytes on disk.
async function checkView(b, report, figures, files) {
  const view = b.page.locator('#views .view').first();
  for (const f of figures) assert.ok(await view.locator(`[data-figure=${f}] img`).isVisible(), `figure ${f} is shown`);
  const text = await view.textContent();
  assert.ok(report.warnings.length > 0, 'the samples give warnings to show');
  const shown = await view.locator('ul.warnings li').allTextContents();
  assert.equal(shown.filter((w) => !/^Settings chosen/.test(w)).length >= report.warnings.length, true, 'every warning is listed');
  assert.ok(text.includes('Methods'), 'a methods paragraph');
  assert.ok((await view.locator('.methods').textContent()).length > 100);
  const kept = await b.page.evaluate(() => window.PD.state.records[window.PD.state.records.length - 1].files);
  assert.deepEqual(kept.map((f) => [f.name, f.sha256]), files.map((p) => [p.split('/').pop(), sha256(p)]));
}

test('generalization across conditions: the page and the command line give the same bytes', SLOW, async () => {
  const b = await loadTable('choices.csv', 'choice');
  await b.page.selectOption('#across-col', 'context');
  await b.page.dispatchEvent('#across-col', 'change');
  await runAndWait(b.page, '#across-start');
  await shot(b.page, 'across-results');
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('across', ['decode', sample('choices.csv'), '--label', 'choice', '--across', 'context',
    '--repeats', '2', '--shuffles', '3']), 'page JSON and CLI JSON differ');
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-across/1');
  assert.equal(report.assignments.length, 2, 'two levels: each way round');
  await checkView(b, report, ['assignments', 'scores', 'null'], [sample('choices.csv')]);
  const csv = await download(b.page, '#views .view button[aria-label^="Save the assignments"]');
  assert.equal(csv.text.trim().split('\n').length, 3);
  const recipe = JSON.parse(await downloadText(b.page, '#export-recipe'));
  assert.deepEqual(recipe.across, { column: 'context', assignments: [] });
  // Training on one level and testing on the other is one assignment; the record on view is then stale.
  await set(b.page, 'across-train', 'citral');
  await b.page.click('#across-start');
  assert.match(await b.page.textContent('#across-test-error'), /the levels to test on/);
  await set(b.page, 'across-test', 'hexanal');
  assert.match(await b.page.textContent('#views .stale'), /the condition column or its levels/);
  await runAndWait(b.page, '#across-start');
  const one = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.deepEqual(one.assignments.map((a) => [a.train, a.test]), [[['citral'], ['hexanal']]]);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a long run of another analysis asks first too, timed on its own tasks', SLOW, async () => {
  // Across conditions (the main decoder on other training sets) and a continuous variable (another decoder): each
  // times one of its own tasks when Start is pressed, and a run over the minute asks before starting anything.
  for (const [file, label, start, across] of [['choices.csv', 'choice', '#across-start', 'context'],
    ['running.csv', 'speed', '#continuous-start', null]]) {
    const b = await loadTable(file, label);
    if (across) {
      await b.page.selectOption('#across-col', across);
      await b.page.dispatchEvent('#across-col', 'change');
    }
    // About 20 min for the main decoding of the example on this project's 2-core machine (2026-12-04): long on any
    // computer for these analyses too.
    await quickSettings(b.page, { repeats: 5000, shuffles: 20000 });
    await b.page.click(start);
    await b.page.waitForSelector('#confirm:not([hidden])', { timeout: 120000 });
    // The question names its analysis, and says the estimate beside the Decode button is another run's.
    const what = across ? `Generalization across '${across}'` : `Decoding '${label}' as a continuous variable`;
    assert.match(await b.page.textContent('#confirm-text'), new RegExp(`^${what}: this run has [\\d,]+ fits and should take about [\\d.]+ (s|min|h) on this computer.*main decoding's\\)\\. Start it\\?$`));
    await b.page.click('#confirm-no');
    assert.equal(await b.page.textContent('#progress-text'), 'Not started.');
    assert.equal(await b.page.locator('#records li').count(), 0, `${start}: nothing ran`);
    // Short settings run without asking.
    await quickSettings(b.page, { repeats: 2, shuffles: 3 });
    await runAndWait(b.page, start);
    assert.equal(await b.page.locator('#records li').count(), 1);
    assert.deepEqual(b.errors, []);
    assertLocalOnly(assert, b.requests, server.origin);
    await b.context.close();
  }
  // Planning the next recording, with its own protocol fields: 1,000 subsamples per size of the Gaussian-kernel
  // SVM, about 3 million fits (under the limit of 5 million; a task is one subsample with its repeats and
  // shuffles, so the timing stays short).
  const b = await loadTable('odours.csv', 'odour');
  await b.page.selectOption('#classifier', 'rbf-svm');
  await set(b.page, 'power-subsamples', 1000);
  await b.page.click('#power-start');
  await b.page.waitForSelector('#confirm:not([hidden])', { timeout: 120000 });
  assert.match(await b.page.textContent('#confirm-text'), /^Planning the next recording: this run has [\d,]+ fits and should take about/);
  await b.page.click('#confirm-no');
  assert.equal(await b.page.textContent('#progress-text'), 'Not started.');
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('continuous decoding: the page and the command line give the same bytes', SLOW, async () => {
  const b = await loadTable('running.csv', 'speed');
  await runAndWait(b.page, '#continuous-start');
  await shot(b.page, 'continuous-results');
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('continuous', ['decode', sample('running.csv'), '--label', 'speed', '--classifier', 'ridge',
    '--repeats', '2', '--shuffles', '3']), 'page JSON and CLI JSON differ');
  // The command line beside the button is the same analysis.
  const line = (await b.page.textContent('#continuous-cli-line')).replace(/\s+/g, ' ').trim();
  assert.match(line, /^popdecode decode running\.csv --label speed .*--classifier ridge /);
  assert.equal(cliJson('continuous-line', line.split(' ').slice(1).map((a) => (a === 'running.csv' ? sample(a) : a))), json);
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-continuous/1');
  await checkView(b, report, ['predicted', 'scores', 'null'], [sample('running.csv')]);
  assert.match(await b.page.textContent('#views .view .headline'), /'speed' decoded with out-of-sample R²/);
  const csv = await download(b.page, '#views .view button[aria-label^="Save the predictions"]');
  assert.equal(csv.text, (await b.page.evaluate(() => window.PD.state.records[0].result.csv.predictions)));
  assert.match(await b.page.textContent('#records'), /ridge regression/);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('planning the next recording: defaults from the core, the same bytes as the command line', SLOW, async () => {
  const b = await loadTable('odours.csv', 'odour');
  // The fields start from the core's defaults (default_power_recipe): 50 subsamples, α 0.05, 2 repeats, 19 shuffles.
  assert.deepEqual(await Promise.all(['power-subsamples', 'power-alpha', 'power-repeats', 'power-shuffles']
    .map((id) => b.page.inputValue('#' + id))), ['50', '0.05', '2', '19']);
  await set(b.page, 'power-trials', '5, 10');
  await set(b.page, 'power-neurons', '4,16');
  await set(b.page, 'power-noise', '0,8');
  await set(b.page, 'power-subsamples', 2);
  await set(b.page, 'power-repeats', 1);
  await runAndWait(b.page, '#power-start');
  await shot(b.page, 'power-results');
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('power', ['power', sample('odours.csv'), '--label', 'odour', '--per-class', '5,10', '--neurons', '4,16',
    '--added', '0,8', '--subsamples', '2', '--repeats', '1', '--shuffles', '19']), 'page JSON and CLI JSON differ');
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-power/1');
  assert.deepEqual(report.trials.map((t) => t.per_class), [5, 10]);
  await checkView(b, report, ['trials', 'neurons', 'noise'], [sample('odours.csv')]);
  const csv = await download(b.page, '#views .view button[aria-label^="Save the power table"]');
  assert.ok(csv.text.split('\n').length > 6);
  // A size that is not a whole number is pointed out beside its field, in words, and nothing runs.
  await set(b.page, 'power-neurons', '4, x');
  await b.page.click('#power-start');
  assert.match(await b.page.textContent('#power-neurons-error'), /whole numbers of at least 1/);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('generalization across conditions over time with temporal generalization: the matrix has its own null, the same bytes as the command line', SLOW, async () => {
  const b = await openPage();
  await b.page.check('input[name=kind][value=binned]');
  await b.page.setInputFiles('#file', sample('choices_binned.csv'));
  await b.page.waitForSelector('#data-view:not([hidden])');
  await b.page.selectOption('#label', 'choice');
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await b.page.check('#generalize');
  await b.page.dispatchEvent('#generalize', 'change');
  assert.equal(await b.page.inputValue('#generalization-null'), 'training-labels', 'the recommended null is the default');
  await b.page.selectOption('#across-col', 'context');
  await b.page.dispatchEvent('#across-col', 'change');
  await runAndWait(b.page, '#across-start');
  await shot(b.page, 'across-time-results');
  const json = await downloadText(b.page, '#export-json');
  // The command line the page gives beside the button runs the same analysis: the same bytes.
  const line = (await b.page.textContent('#across-cli-line')).replace(/\s+/g, ' ').trim();
  assert.match(line, /^popdecode timecourse choices_binned\.csv --trial trial --time time --label choice .*--generalize .*--across context$/);
  const args = line.split(' ').slice(1).map((a) => (a === 'choices_binned.csv' ? sample(a) : a));
  assert.equal(json, cliJson('across-time', args), 'page JSON and the JSON of the page\'s command line differ');
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-across-timecourse/1');
  assert.equal(report.generalization.null_method, 'training-labels');
  assert.equal(report.recipe.time.generalization_null, 'training-labels', 'the recipe keeps the null it ran with');
  const view = b.page.locator('#views .view').first();
  assert.match(await view.textContent(), /The train × test matrix was tested against a null with training labels shuffled, test labels kept\./);
  assert.match(await view.locator('.methods').textContent(), /permuted only the training trials' labels/);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a study of sessions over time: what each session is told from the files, windows and columns, the same bytes as the command line', SLOW, async () => {
  const b = await openPage();
  await b.page.check('input[name=kind][value=study]');
  const dir = sample('study');
  const sessions = readdirSync(dir).filter((f) => /^m\d-d\d_binned\.csv$/.test(f)).sort();
  await b.page.setInputFiles('#study-files', [join(dir, 'study_time.csv'), ...sessions.map((f) => join(dir, f))]);
  await b.page.waitForSelector('#study-sessions table');
  assert.equal(await b.page.inputValue('#study-holds'), 'binned', 'binned sessions are told from their columns');
  assert.equal(await b.page.isVisible('#trial-col'), true, 'the trial column is asked for');
  assert.equal(await b.page.isVisible('#time-col'), true, 'the time column is asked for');
  assert.equal(await b.page.isVisible('#generalize'), true, 'the time settings are shown');
  assert.equal(await b.page.inputValue('#time-col'), 'time');
  await b.page.selectOption('#label', 'odour');
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await set(b.page, 'study-draws', 200);
  await b.page.waitForFunction(() => /popdecode study study_time\.csv --binned --trial trial --time time/.test(document.getElementById('cli-line').textContent));
  await runAndWait(b.page);
  await shot(b.page, 'study-time-results');
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('study-time', ['study', join(dir, 'study_time.csv'), '--binned', '--label', 'odour', '--repeats', '2',
    '--shuffles', '3', '--group-draws', '200']), 'page JSON and CLI JSON differ');
  const report = JSON.parse(json);
  assert.equal(report.sessions.length, sessions.length);
  const view = b.page.locator('#views .view').first();
  assert.ok(await view.locator('[data-figure=group_curve] img').isVisible(), 'the group curve is shown');
  // Told wrong, put right: trial tables instead hide the time fields and decode each session as one table.
  await b.page.selectOption('#study-holds', 'table');
  assert.equal(await b.page.isVisible('#time-col'), false);
  await b.page.waitForFunction(() => /study's options|time settings|settings/.test((document.querySelector('#views .stale') || {}).textContent || ''));
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a study of spike-time sessions: each session\'s events and trial table paired by the study table, the same bytes as the command line', SLOW, async () => {
  // Three sessions cut from the spike-time sample by its session column (invented data).
  const dir = mkdtempSync(join(tmp, 'events-study-'));
  const trials = readFileSync(sample('odour_trials.csv'), 'utf8').trim().split('\n');
  const spikes = readFileSync(sample('odour_spikes.csv'), 'utf8').trim().split('\n');
  const rows = ['file,session,subject,trials'];
  const files = [join(dir, 'study.csv')];
  for (const s of ['s1', 's2', 's3']) {
    const mine = trials.slice(1).filter((l) => l.endsWith(',' + s));
    const ids = new Set(mine.map((l) => l.split(',')[0]));
    writeFileSync(join(dir, `${s}_trials.csv`), [trials[0], ...mine].join('\n') + '\n');
    writeFileSync(join(dir, `${s}_spikes.csv`), [spikes[0], ...spikes.slice(1).filter((l) => ids.has(l.split(',')[0]))].join('\n') + '\n');
    rows.push(`${s}_spikes.csv,${s},mouse-${s === 's3' ? 'b' : 'a'},${s}_trials.csv`);
    files.push(join(dir, `${s}_spikes.csv`), join(dir, `${s}_trials.csv`));
  }
  writeFileSync(files[0], rows.join('\n') + '\n');
  const b = await openPage();
  await b.page.check('input[name=kind][value=study]');
  await b.page.setInputFiles('#study-files', files);
  await b.page.waitForSelector('#study-sessions table');
  assert.equal(await b.page.inputValue('#study-holds'), 'events', 'a trials column in the study table means spike times');
  assert.equal(await b.page.isVisible('#neuron-col'), true);
  assert.equal(await b.page.isVisible('#width'), true, 'the windows are asked for');
  assert.equal(await b.page.inputValue('#neuron-col'), 'neuron');
  await b.page.selectOption('#label', 'odour');
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await set(b.page, 'study-draws', 200);
  await b.page.waitForFunction(() => document.querySelectorAll('#study-sessions tr').length === 4);
  await runAndWait(b.page);
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('study-events', ['study', files[0], '--label', 'odour', '--start', '-0.5', '--end', '1',
    '--repeats', '2', '--shuffles', '3', '--group-draws', '200']), 'page JSON and CLI JSON differ');
  assert.equal(JSON.parse(json).sessions.length, 3);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('the example study is one click away: ten sessions from four mice listed, ready to run', async () => {
  const b = await openPage();
  // A trial table loaded before: its summary is not left above the study's sessions.
  await b.page.setInputFiles('#file', sample('running.csv'));
  await b.page.waitForSelector('#data-view:not([hidden])');
  assert.match(await b.page.textContent('#file-summaries'), /running\.csv/);
  await b.page.check('input[name=kind][value=study]');
  await b.page.click('#example-study');
  await b.page.waitForFunction(() => document.querySelectorAll('#study-sessions tr').length === 11);
  assert.equal(await b.page.inputValue('#label'), 'odour');
  assert.equal(await b.page.inputValue('#study-holds'), 'table');
  assert.equal(await b.page.inputValue('[aria-label="Subject of session m4-d3"]'), 'm4');
  assert.equal(await b.page.textContent('#file-summaries'), '');
  await b.page.waitForFunction(() => !document.getElementById('start').disabled);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a study of many sessions: listed before running, the same bytes as the command line', SLOW, async () => {
  const b = await openPage();
  await b.page.check('input[name=kind][value=study]');
  const dir = sample('study');
  const sessions = readdirSync(dir).filter((f) => /^m\d-d\d\.csv$/.test(f)).sort();
  const files = [join(dir, 'study.csv'), ...sessions.map((f) => join(dir, f))];
  await b.page.setInputFiles('#study-files', files);
  await b.page.waitForSelector('#study-sessions table');
  await b.page.selectOption('#label', 'odour');
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await set(b.page, 'study-draws', 200);
  await b.page.waitForFunction((n) => document.querySelectorAll('#study-sessions tr').length === n + 1, sessions.length);
  const listed = await b.page.locator('#study-sessions tr th[scope=row]').allTextContents();
  assert.deepEqual(listed, sessions.map((f) => f.replace('.csv', '')));
  assert.equal(await b.page.inputValue('[aria-label="Subject of session m1-d1"]'), 'm1');
  assert.equal(await b.page.textContent('#start'), 'Run the study');
  await runAndWait(b.page);
  await shot(b.page, 'study-results');
  const json = await downloadText(b.page, '#export-json');
  assert.equal(json, cliJson('study', ['study', join(dir, 'study.csv'), '--label', 'odour', '--repeats', '2', '--shuffles', '3',
    '--group-draws', '200']), 'page JSON and CLI JSON differ');
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-study/1');
  assert.equal(report.sessions.length, sessions.length);
  await checkView(b, report, ['sessions'], files);
  const csv = await download(b.page, '#views .view button[aria-label^="Save the sessions"]');
  assert.equal(csv.text.trim().split('\n').length, sessions.length + 1);
  // A subject changed on the page: the study runs from the session list as edited, and the record on view is stale.
  await b.page.fill('[aria-label="Subject of session m1-d1"]', 'm9');
  await b.page.dispatchEvent('[aria-label="Subject of session m1-d1"]', 'change');
  await b.page.waitForFunction(() => /study's options/.test(document.querySelector('#views .stale').textContent));
  await runAndWait(b.page);
  const edited = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.equal(edited.sessions.find((s) => s.session === 'm1-d1').subject, 'm9');
  assert.equal(edited.study.subjects, 5);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a study scored by generalization across conditions: sessions over time, the same bytes as the command line', SLOW, async () => {
  // The binned choices sample, one file per session, with a study table naming them.
  const dir = mkdtempSync(join(tmp, 'across-study-'));
  const [header, ...rows] = readFileSync(sample('choices_binned.csv'), 'utf8').trim().split('\n');
  const col = header.split(',').indexOf('session');
  const names = ['s1', 's2', 's3'];
  names.forEach((s) => writeFileSync(join(dir, `${s}.csv`), [header, ...rows.filter((r) => r.split(',')[col] === s)].join('\n') + '\n'));
  writeFileSync(join(dir, 'study.csv'), 'file,session\n' + names.map((s) => `${s}.csv,${s}`).join('\n') + '\n');
  const b = await openPage();
  await b.page.check('input[name=kind][value=study]');
  await b.page.setInputFiles('#study-files', [join(dir, 'study.csv'), ...names.map((s) => join(dir, `${s}.csv`))]);
  await b.page.waitForSelector('#study-sessions table');
  assert.equal(await b.page.inputValue('#study-holds'), 'binned');
  await b.page.selectOption('#label', 'choice');
  await b.page.dispatchEvent('#label', 'change');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await set(b.page, 'study-draws', 200);
  assert.equal(await b.page.isVisible('#across-col'), true, 'generalization across conditions is offered in a study');
  await b.page.selectOption('#across-col', 'context');
  await b.page.dispatchEvent('#across-col', 'change');
  await runAndWait(b.page, '#across-start');
  await shot(b.page, 'study-across-results');
  const json = await downloadText(b.page, '#export-json');
  const recipe = JSON.parse(await downloadText(b.page, '#export-recipe'));
  assert.deepEqual(recipe.across, { column: 'context', assignments: [] });
  const ignore = recipe.columns.ignore && recipe.columns.ignore.length ? ['--ignore', recipe.columns.ignore.join(',')] : [];
  assert.equal(json, cliJson('study-across', ['study', join(dir, 'study.csv'), '--binned', '--trial', 'trial', '--time', 'time',
    '--label', 'choice', '--across', 'context', ...ignore, '--repeats', '2', '--shuffles', '3', '--group-draws', '200']),
  'page JSON and CLI JSON differ');
  const report = JSON.parse(json);
  assert.equal(report.schema, 'popdecode-study/1');
  assert.equal(report.sessions.length, 3);
  assert.match(report.score, /trained at some levels of 'context'/);
  const view = b.page.locator('#views .view').first();
  assert.ok(await view.locator('[data-figure=group_curve] img').isVisible(), 'the group curve is shown');
  assert.match(await view.textContent(), /trained at some levels of 'context'/, 'the view says what a session\'s score is');
  assert.match(await view.textContent(), /Bernardi/, 'the methods paragraph cites the generalization measure');
  assert.match(await b.page.textContent('#records'), /study\), each session carried over between conditions/);
  assert.match(await view.textContent(), /trained and tested across 'context'/, 'the record says its settings');
  // One level trained, the other tested: the record on view is stale, and its button runs the study again that
  // way (clicked straight from the field just typed in, whose change fires as it loses focus).
  await set(b.page, 'across-train', 'citral');
  await set(b.page, 'across-test', 'hexanal');
  await b.page.waitForFunction(() => /the condition column or its levels/.test((document.querySelector('#views .stale') || {}).textContent || ''));
  await runAndWait(b.page, '#views .stale button');
  const one = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.equal(one.schema, 'popdecode-study/1');
  assert.deepEqual(one.recipe.across.assignments, [{ train: ['citral'], test: ['hexanal'] }]);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('the analyses\' examples are one click away: choices across odour contexts, running speed', SLOW, async () => {
  const b = await openPage();
  await b.page.click('#example-across');
  await b.page.waitForFunction(() => document.getElementById('across-col').value === 'context');
  assert.equal(await b.page.inputValue('#label'), 'choice');
  assert.match(await b.page.textContent('#data-status'), /“Train on one condition, test on another” \(under More analyses of these data\) runs it/);
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await runAndWait(b.page, '#across-start');
  const across = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.equal(across.schema, 'popdecode-across/1');
  assert.equal(across.input.files[0].file, 'choices.csv');
  assert.deepEqual(across.levels, ['citral', 'hexanal']);
  assert.ok(across.summary.accuracy.mean > 0.7, 'the shared code carries over');
  await b.page.click('#example-continuous');
  await b.page.waitForFunction(() => document.getElementById('label').value === 'speed');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await runAndWait(b.page, '#continuous-start');
  const continuous = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.equal(continuous.schema, 'popdecode-continuous/1');
  assert.equal(continuous.input.files[0].file, 'running.csv');
  assert.ok(continuous.summary.r2.mean > 0.3, `speed is decoded (R² ${continuous.summary.r2.mean})`);
  // From the 30 units: the heading, another behavioural variable in the table, is not decoded from.
  assert.equal(continuous.input.features.length, 30);
  assert.ok(!continuous.input.features.includes('heading'));
  assert.match(await b.page.textContent('#data-status'), /'heading', another behavioural variable, is left out/);
  // The label changed to the heading: the speed, released from being the label, is not decoded as a neuron (a new
  // user's walk found it ticked and decoded), and the page says so; an angle's scores are named as such.
  await b.page.selectOption('#label', 'heading');
  await b.page.selectOption('#value-decoder', 'circular-ridge');
  await b.page.waitForFunction(() => /'speed' was chosen/.test(document.getElementById('features-note').textContent));
  assert.equal(await b.page.textContent('#feature-count'), '(30 of 31 chosen)');
  assert.match(await b.page.textContent('#features-note'), /'speed' was chosen as another column \(label or group\), so it is left out of the features/);
  await runAndWait(b.page, '#continuous-start');
  const heading = JSON.parse(await downloadText(b.page, '#export-json'));
  assert.equal(heading.input.features.length, 30);
  assert.ok(!heading.input.features.includes('speed'));
  const shown = await b.page.textContent('#views');
  assert.match(shown, /circular correlation/);
  assert.doesNotMatch(shown, /Pearson correlation|angular_error/);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});
