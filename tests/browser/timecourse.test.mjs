// Time courses in the page: spike events and binned tables, the same numbers as the command line, bad files, and
// the offline file.
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { writeFileSync, readFileSync, mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { serve, browser, closeAll, assertLocalOnly, shot, quickSettings, runAndWait, whenReady, downloadText, cli, ROOT } from './helpers.mjs';

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });

const tmp = mkdtempSync(join(tmpdir(), 'popdecode-browser-time-'));

async function openPage(url) {
  const b = await browser();
  await b.page.goto(url);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  return b;
}

async function set(page, id, value) {
  await page.fill('#' + id, String(value));
  await page.dispatchEvent('#' + id, 'change');
}

/// The spike-events example with small settings: 0.2 s windows stepped by 0.1 s, temporal generalization on.
async function eventsRun(url) {
  const b = await openPage(url);
  await b.page.check('input[name=kind][value=events]');
  await b.page.click('#example-events');
  await b.page.waitForFunction(() => /Trials per class/.test(document.getElementById('classes').textContent));
  await quickSettings(b.page, { repeats: 3, shuffles: 19 });
  await set(b.page, 'width', 0.2);
  await set(b.page, 'step', 0.1);
  await b.page.check('#generalize');
  await b.page.dispatchEvent('#generalize', 'change');
  const headline = await runAndWait(b.page);
  const json = await downloadText(b.page, '#export-json');
  const recipe = await downloadText(b.page, '#export-recipe');
  return { b, headline, json, recipe };
}

test('spike events: the page and the command line give the same bytes', async () => {
  const { b, headline, json, recipe } = await eventsRun(`${server.origin}/index.html`);
  await shot(b.page, 'timecourse-results');
  const recipeFile = join(tmp, 'events.recipe.json');
  writeFileSync(recipeFile, recipe);
  const out = join(tmp, 'events-cli.json');
  const stdout = cli(['timecourse', '--events', join(ROOT, 'samples', 'odour_spikes.csv'), '--trials',
    join(ROOT, 'samples', 'odour_trials.csv'), '--recipe', recipeFile, '--quiet', '--json', out]);
  assert.equal(json, readFileSync(out, 'utf8'), 'page JSON and CLI JSON differ');
  assert.equal(headline.trim(), stdout.split('\n')[0].trim());
  assert.match(headline, /'odour' decoded at up to \d+\.\d % accuracy at .* s .*chance 33\.3 %/);
  const report = JSON.parse(json);
  assert.equal(report.windows.length, 14);
  assert.equal(report.generalization.scores.length, 14);
  assert.ok(await b.page.isVisible('[data-figure=curve] img'));
  assert.ok(await b.page.isVisible('[data-figure=generalization] img'));
  assert.equal(await b.page.locator('[data-figure=confusion]').isVisible(), false, 'trial-table figures are hidden');
  assert.match(await b.page.textContent('#views'), /time course/);
  assert.match(await b.page.textContent('#views .methods'), /windows of 0\.2 s stepped by 0\.1 s/);
  assert.match(await b.page.textContent('#cli-line'), /^popdecode timecourse --events odour_spikes\.csv --trials odour_trials\.csv/);
  const curve = await downloadText(b.page, '#export-curve');
  assert.match(curve, /^window,start_s,end_s,time_s,accuracy_mean/);
  assert.equal(curve.trim().split('\n').length, 15);
  const matrix = await downloadText(b.page, '#export-matrix');
  assert.equal(matrix.trim().split('\n').length, 15);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('binned table: one worker and three give identical results', async () => {
  const runs = [];
  for (const workers of [1, 3]) {
    const b = await openPage(`${server.origin}/index.html?workers=${workers}`);
    await b.page.check('input[name=kind][value=binned]');
    await b.page.click('#example');
    await b.page.waitForFunction(() => /15 windows/.test(document.getElementById('classes').textContent));
    assert.equal(await b.page.inputValue('#trial-col'), 'trial');
    assert.equal(await b.page.inputValue('#time-col'), 'time');
    assert.equal(await b.page.inputValue('#label'), 'odour');
    await quickSettings(b.page, { repeats: 3, shuffles: 9 });
    await runAndWait(b.page);
    runs.push(await downloadText(b.page, '#export-json'));
    assertLocalOnly(assert, b.requests, server.origin);
    await shot(b.page, `binned-${workers}`);
    await b.context.close();
  }
  assert.equal(runs[0], runs[1]);
  assert.equal(JSON.parse(runs[0]).input.kind, 'binned');
});

test('a spike file naming an unknown trial gets a clear message, and the page recovers', async () => {
  const b = await openPage(`${server.origin}/index.html`);
  await b.page.check('input[name=kind][value=events]');
  const events = join(tmp, 'spikes.csv');
  const trials = join(tmp, 'trials.csv');
  writeFileSync(events, 'trial,neuron,time\nt1,n1,0.1\nt7,n1,0.2\n');
  writeFileSync(trials, 'trial,odour\nt1,a\nt2,b\n');
  await b.page.setInputFiles('#events-file', events);
  await b.page.setInputFiles('#trials-file', trials);
  await b.page.waitForSelector('#data-error:not([hidden])');
  assert.match(await b.page.textContent('#data-error'), /spikes\.csv, line 3, column 'trial': trial 't7' is not in the trial table trials\.csv/);
  assert.equal(await b.page.isDisabled('#start'), true);
  await shot(b.page, 'timecourse-bad-events');
  await b.page.click('#example-events');
  await b.page.waitForSelector('#data-error', { state: 'hidden' });
  await whenReady(b.page);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('the offline file runs a time course from file:// like the served page', async () => {
  const offline = await eventsRun('file://' + join(ROOT, 'dist', 'popdecode.html'));
  const served = await eventsRun(`${server.origin}/index.html`);
  assert.equal(offline.json, served.json);
  assertLocalOnly(assert, offline.b.requests, null);
  assert.deepEqual(offline.b.errors, []);
  await shot(offline.b.page, 'timecourse-offline');
  await offline.b.context.close();
  await served.b.context.close();
});

test('an NWB file written by pynwb decodes in the page with the command line\'s bytes', async () => {
  // The reference venv (scripts/reference-venv.sh, made before the browser tests run) has pynwb.
  const venv = process.env.POPDECODE_VENV || join(ROOT, 'target', 'reference-venv');
  const nwb = join(tmp, 'odours.nwb');
  execFileSync(join(venv, 'bin', 'python'), ['-c',
    `import sys; sys.path.insert(0, ${JSON.stringify(join(ROOT, 'tests', 'reference'))}); ` +
    `from test_nwb import write_nwb; write_nwb(${JSON.stringify(nwb)}, raw_mb=40)`]);
  const b = await openPage(`${server.origin}/index.html`);
  await b.page.check('input[name=kind][value=nwb]');
  await b.page.setInputFiles('#nwb-file', nwb);
  await b.page.waitForFunction(() => /NWB, 12 units/.test(document.getElementById('file-summaries').textContent));
  // Read lazily: of the 40 MB of raw voltage beside the tables, next to nothing is read (only the hash sees it).
  const summary = await b.page.textContent('#file-summaries');
  const [, read, size] = summary.match(/read ([\d.]+) MB of ([\d.]+) MB for the units and trials tables/);
  assert.ok(Number(size) > 40 && Number(read) < 2, summary);
  assert.ok(summary.includes(createHash('sha256').update(readFileSync(nwb)).digest('hex').slice(0, 16)), summary);
  assert.equal(await b.page.inputValue('#label'), 'odour');
  assert.equal(await b.page.inputValue('#align-col'), 'start_time');
  // Keep the units the sorter called good (the first 8 of 12).
  await b.page.selectOption('#unit-col', 'quality');
  await b.page.selectOption('#unit-op', '=');
  await set(b.page, 'unit-value', 'good');
  await quickSettings(b.page, { repeats: 3, shuffles: 9 });
  await set(b.page, 'width', 0.2);
  await set(b.page, 't-start', -0.5);
  await set(b.page, 't-end', 1);
  const headline = await runAndWait(b.page);
  await shot(b.page, 'nwb-results');
  const json = await downloadText(b.page, '#export-json');
  const recipe = await downloadText(b.page, '#export-recipe');
  const recipeFile = join(tmp, 'nwb.recipe.json');
  writeFileSync(recipeFile, recipe);
  const out = join(tmp, 'nwb-cli.json');
  const stdout = cli(['timecourse', '--nwb', nwb, '--recipe', recipeFile, '--quiet', '--json', out]);
  assert.equal(json, readFileSync(out, 'utf8'), 'page JSON and CLI JSON differ');
  assert.equal(headline.trim(), stdout.split('\n')[0].trim());
  assert.equal(JSON.parse(json).input.kind, 'nwb');
  assert.equal(JSON.parse(json).input.neurons.length, 8);
  assert.deepEqual(JSON.parse(recipe).time.input.units, [{ column: 'quality', op: '=', values: ['good'] }]);
  assertLocalOnly(assert, b.requests, server.origin);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('the offline file reads an NWB file too, and a file that is not NWB or lacks its trials gets a clear message', async () => {
  const venv = process.env.POPDECODE_VENV || join(ROOT, 'target', 'reference-venv');
  const good = join(tmp, 'offline.nwb');
  const partial = join(tmp, 'no-trials.nwb');
  execFileSync(join(venv, 'bin', 'python'), ['-c',
    `import sys; sys.path.insert(0, ${JSON.stringify(join(ROOT, 'tests', 'reference'))}); ` +
    `from test_nwb import write_nwb; write_nwb(${JSON.stringify(good)}); ` +
    `write_nwb(${JSON.stringify(partial)}, with_trials=False)`]);
  const notNwb = join(tmp, 'table.nwb');
  writeFileSync(notNwb, 'trial,odour\n1,citral\n');
  const b = await openPage('file://' + join(ROOT, 'dist', 'popdecode.html'));
  await b.page.check('input[name=kind][value=nwb]');
  const error = () => b.page.waitForFunction(() => !document.getElementById('data-error').hidden)
    .then(() => b.page.textContent('#data-error'));
  await b.page.setInputFiles('#nwb-file', notNwb);
  assert.match(await error(), /table\.nwb: not an HDF5 file, so not an NWB file/);
  await b.page.setInputFiles('#nwb-file', partial);
  await b.page.waitForFunction(() => /no-trials\.nwb/.test(document.getElementById('data-error').textContent));
  assert.match(await b.page.textContent('#data-error'), /no-trials\.nwb: this NWB file has no trials table \('intervals\/trials'\)/);
  // The page keeps working: the good file loads and decodes.
  await b.page.setInputFiles('#nwb-file', good);
  await b.page.waitForFunction(() => /NWB, 12 units/.test(document.getElementById('file-summaries').textContent));
  assert.equal(await b.page.isHidden('#data-error'), true);
  await quickSettings(b.page, { repeats: 2, shuffles: 0 });
  await set(b.page, 'width', 0.2);
  const headline = await runAndWait(b.page);
  assert.match(headline, /'odour' decoded/);
  assertLocalOnly(assert, b.requests, null);
  assert.deepEqual(b.errors, []);
  await shot(b.page, 'nwb-offline');
  await b.context.close();
});
