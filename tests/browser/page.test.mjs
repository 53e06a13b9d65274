// The page as a scientist uses it: load data, run, read the numbers, export; and the offline single file.
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { writeFileSync, readFileSync, mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { serve, browser, closeAll, assertLocalOnly, shot, quickSettings, runAndWait, whenReady, downloadText, cli, ROOT, SLOW } from './helpers.mjs';

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });

const tmp = mkdtempSync(join(tmpdir(), 'popdecode-browser-'));

async function openPage(query = '') {
  const b = await browser();
  await b.page.goto(`${server.origin}/index.html${query}`);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  return b;
}

async function exampleRun(query) {
  const b = await openPage(query);
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page);
  const headline = await runAndWait(b.page);
  const json = await downloadText(b.page, '#export-json');
  const recipe = await downloadText(b.page, '#export-recipe');
  return { b, headline, json, recipe };
}

test('example run matches the command line byte for byte', async () => {
  const { b, headline, json, recipe } = await exampleRun('');
  await shot(b.page, 'example-results');
  const recipeFile = join(tmp, 'page.recipe.json');
  writeFileSync(recipeFile, recipe);
  const cliJson = join(tmp, 'cli.json');
  const stdout = cli(['decode', join(ROOT, 'samples', 'odours.csv'), '--recipe', recipeFile, '--quiet', '--json', cliJson]);
  assert.equal(json, readFileSync(cliJson, 'utf8'), 'page JSON and CLI JSON differ');
  assert.equal(headline.trim(), stdout.split('\n')[0].trim());
  assert.match(headline, /'odour' decoded at \d+\.\d % accuracy \(95 % CI \d+\.\d–\d+\.\d %; mean over \d+ cross-validation repeats; chance 25\.0 %\), p [=≤] .* over 6 shuffles/);
  const methods = await b.page.textContent('#views .methods');
  assert.match(methods, /SHA-256 [0-9a-f]{64}/);
  // The example holds sessions out in turn: the settings it came from say so, not "folds 5".
  assert.match(await b.page.textContent('#views .provenance'), /leave one 'session' out \(Folds 5, at least the 4 groups\); 4 repeats/);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('one worker and three workers give identical results', SLOW, async () => {
  const one = await exampleRun('?workers=1');
  const three = await exampleRun('?workers=3');
  assert.equal(one.json, three.json);
  assertLocalOnly(assert, [...one.b.requests, ...three.b.requests], server.origin);
  await one.b.context.close();
  await three.b.context.close();
});

test('workers sharing memory and workers each with a copy give identical results', SLOW, async () => {
  // This server isolates the page (the shared-memory build, one copy of the data); a plain static host does not
  // (the plain build, a copy per worker): the two builds must give the same bytes.
  const shared = await exampleRun('?workers=2');
  assert.equal(await shared.b.page.evaluate(() => document.body.dataset.memory), 'shared');
  assert.match(await shared.b.page.textContent('#workers-info'), /sharing one copy of the data/);
  const plain = await serve({ isolated: false });
  const b = await browser();
  await b.page.goto(`${plain.origin}/index.html?workers=2`);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  assert.equal(await b.page.evaluate(() => document.body.dataset.memory), 'copies');
  assert.match(await b.page.textContent('#workers-info'), /each with its own copy of the data/);
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page);
  await runAndWait(b.page);
  assert.equal(await downloadText(b.page, '#export-json'), shared.json);
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, plain.origin);
  await shared.b.context.close();
  await b.context.close();
  await plain.close();
});

test('file chooser and drag-and-drop both load a file', async () => {
  const b = await openPage();
  // Before any data, the command line names placeholders, not a column called "label".
  await b.page.waitForFunction(() => / --classifier /.test(document.getElementById('cli-line').textContent));
  assert.match(await b.page.textContent('#cli-line'), /^popdecode decode FILE --label COLUMN --classifier/);
  const csv = 'stimulus,u1,u2\n' + Array.from({ length: 40 }, (_, i) => `${i % 2 ? 'grating' : 'blank'},${(i % 2) * 3 + Math.sin(i)},${Math.cos(i)}`).join('\n') + '\n';
  const file = join(tmp, 'upload.csv');
  writeFileSync(file, csv);
  await b.page.setInputFiles('#file', file);
  await b.page.waitForSelector('#data-view:not([hidden])');
  assert.match(await b.page.textContent('#file-summaries'), /upload\.csv: 40 rows × 3 columns, comma-separated/);
  assert.equal(await b.page.inputValue('#label'), 'stimulus');
  await shot(b.page, 'uploaded');

  await b.page.evaluate((text) => {
    const dt = new DataTransfer();
    dt.items.add(new File([text], 'dropped.csv', { type: 'text/csv' }));
    const drop = document.getElementById('drop');
    drop.dispatchEvent(new DragEvent('dragover', { dataTransfer: dt, bubbles: true, cancelable: true }));
    drop.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
  }, csv.replace(/,/g, ';'));
  await b.page.waitForFunction(() => document.getElementById('file-summaries').textContent.startsWith('dropped.csv'));
  assert.match(await b.page.textContent('#file-summaries'), /semicolon-separated/);
  // More repeats per shuffle than repeats is refused beside the field (the core refuses it too): such a null would
  // be too narrow.
  await quickSettings(b.page, { repeats: 3, shuffles: 5 });
  await b.page.fill('#shuffle-repeats', '4');
  await b.page.dispatchEvent('#shuffle-repeats', 'change');
  await b.page.waitForSelector('#shuffle-repeats-error');
  assert.match(await b.page.textContent('#shuffle-repeats-error'), /Repeats per shuffle must be at most the Repeats \(3\)/);
  assert.equal(await b.page.isDisabled('#start'), true);
  await b.page.fill('#shuffle-repeats', '');
  await b.page.dispatchEvent('#shuffle-repeats', 'change');
  await quickSettings(b.page, { repeats: 3, shuffles: 0 });
  // The command-line footer wraps between options, never inside one ("-" at a line's end, "-shuffles" below).
  await b.page.waitForFunction(() => / --shuffles 0/.test(document.getElementById('cli-line').textContent));
  assert.deepEqual(await b.page.locator('#cli-line .unbroken').evaluateAll((spans) => spans
    .filter((s) => s.textContent.startsWith('--shuffles')).map((s) => [s.textContent, getComputedStyle(s).whiteSpace])), [['--shuffles 0', 'nowrap']]);
  const headline = await runAndWait(b.page);
  assert.match(headline, /'stimulus' decoded at .* no shuffle control run\./);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('cancel stops the workers at once and the page runs again afterwards', SLOW, async () => {
  const b = await openPage('?workers=2');
  // Every worker the page starts, and whether it has ended (a cancelled run does not wait for its workers' tasks:
  // workers sharing memory, as here, end after the task each is in, which the core's stop flag cuts short).
  const workers = [];
  b.page.on('worker', (w) => { const entry = { closed: false }; workers.push(entry); w.on('close', () => { entry.closed = true; }); });
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  // Long on any machine: about 20 min on this project's 2-core machine (2026-12-04), so over the minute past which a
  // run asks first even on a computer ten times faster.
  await quickSettings(b.page, { repeats: 5000, shuffles: 20000 });
  await whenReady(b.page);
  // The estimate's one timed task runs in a worker of its own, which stays warm for the run (small data).
  await b.page.waitForFunction(() => /on this computer\./.test(document.getElementById('estimate').textContent));
  const dataWorker = workers[0];
  const beforeRun = workers.length;
  await b.page.click('#start');
  // A run this long asks first; saying no starts nothing.
  await b.page.waitForSelector('#confirm:not([hidden])');
  assert.match(await b.page.textContent('#confirm-text'), /should take about [\d.]+ (s|min|h) on this computer/);
  await b.page.click('#confirm-no');
  assert.equal(await b.page.textContent('#progress-text'), 'Not started.');
  assert.equal(workers.length, beforeRun, 'no run worker was started');
  await b.page.click('#start');
  await b.page.waitForSelector('#confirm:not([hidden])');
  await b.page.click('#confirm-yes');
  await b.page.waitForFunction(() => /fits \(\d+\s%\)/.test(document.getElementById('progress-text').textContent));
  // The run's workers: every live one but the data worker (the warm one that timed the task, and one new).
  const running = workers.filter((w) => w !== dataWorker && !w.closed);
  assert.equal(running.length, 2, 'two run workers');
  assert.equal(workers.length, beforeRun + 1, 'the warm worker was used, one more started');
  await shot(b.page, 'running');
  await b.page.click('#cancel');
  assert.match(await b.page.textContent('#progress-text'), /^Cancelled/);
  // Terminated, not finishing thousands of tasks first.
  for (let i = 0; i < 100 && !running.every((w) => w.closed); i++) await new Promise((ok) => setTimeout(ok, 100));
  assert.ok(running.every((w) => w.closed), 'the run workers were terminated');
  assert.equal(await b.page.isDisabled('#start'), false);
  assert.equal(await b.page.locator('#views .view').count(), 0, 'nothing on view after a cancelled run');
  await shot(b.page, 'cancelled');
  await quickSettings(b.page, { repeats: 2, shuffles: 0 });
  await runAndWait(b.page);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a long run asks first even when Start is pressed while its settings are still being checked and timed', async () => {
  const b = await openPage('?workers=2');
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await whenReady(b.page);
  // A new classifier (a new timing) and a long protocol, then Start at once: the run waits for the check and the
  // timing of these settings, then asks.
  await b.page.selectOption('#classifier', 'logistic');
  await quickSettings(b.page, { repeats: 5000, shuffles: 20000 });
  await b.page.click('#start', { force: true });
  await b.page.waitForSelector('#confirm:not([hidden])');
  assert.match(await b.page.textContent('#confirm-text'), /should take about [\d.]+ (s|min|h) on this computer/);
  await b.page.click('#confirm-no');
  assert.equal(await b.page.textContent('#progress-text'), 'Not started.');
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('markup in the file is shown as text and never runs', async () => {
  const b = await openPage();
  const evil = '<img src=x onerror="window.__pwned=1">';
  const rows = Array.from({ length: 30 }, (_, i) => `${i % 2 ? '<script>window.__pwned=2</script>' : '<b>bold</b>'},${(i % 2) * 2 + Math.sin(i)},${Math.cos(i)}`);
  const csv = `"${evil.replace(/"/g, '""')}","<svg onload=window.__pwned=3>",n2\n` + rows.join('\n') + '\n';
  const file = join(tmp, 'evil.csv');
  writeFileSync(file, csv);
  await b.page.setInputFiles('#file', file);
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page, { repeats: 2, shuffles: 3 });
  await runAndWait(b.page);
  await shot(b.page, 'injection');
  assert.equal(await b.page.evaluate(() => window.__pwned), undefined);
  assert.equal(await b.page.textContent('#previews th'), evil);
  assert.equal(await b.page.locator('#previews img, #views script, #views b').count(), 0);
  assert.match(await b.page.textContent('#views'), /<script>window.__pwned=2<\/script>/);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('a malformed file gets a clear message and the page keeps working', async () => {
  const b = await openPage();
  const file = join(tmp, 'broken.csv');
  writeFileSync(file, 'odour,n1,n2\na,1,2\nb,3,4\na,5,oops\nb,1,1\n');
  await b.page.setInputFiles('#file', file);
  await b.page.waitForSelector('#data-error:not([hidden])');
  assert.equal((await b.page.textContent('#data-error')).trim(), "broken.csv, line 4, column 'n2': 'oops' is not a number");
  assert.equal(await b.page.isDisabled('#start'), true);
  // The run section says why nothing can run, and what to do.
  assert.match(await b.page.textContent('#estimate'), /Nothing can run on the data as it is set up: the message in the Data section says why/);
  await shot(b.page, 'malformed');
  const ragged = join(tmp, 'ragged.csv');
  writeFileSync(ragged, 'odour,n1,n2\na,1,2\nb,3\n');
  await b.page.setInputFiles('#file', ragged);
  await b.page.waitForFunction(() => /line 3: this row has 2 fields/.test(document.getElementById('data-error').textContent));
  await b.page.click('#example');
  await b.page.waitForSelector('#data-error', { state: 'hidden' });
  await quickSettings(b.page, { repeats: 2, shuffles: 0 });
  await runAndWait(b.page);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('the offline file works from file:// with no network', async () => {
  const b = await browser();
  await b.page.goto('file://' + join(ROOT, 'dist', 'popdecode.html'));
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page);
  const headline = await runAndWait(b.page);
  await shot(b.page, 'offline');
  assert.match(headline, /'odour' decoded at .* over 6 shuffles/);
  const json = await downloadText(b.page, '#export-json');
  const served = await exampleRun('');
  assert.equal(json, served.json, 'offline and served pages differ');
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, null);
  assert.ok(b.requests.some((u) => u.startsWith('worker:blob:')), 'workers run from blob URLs');
  await served.b.context.close();
  await b.context.close();
});

test('the request recorder sees what workers fetch from elsewhere', async () => {
  // Guards the network assertion itself: a worker's request to another origin must be caught.
  const elsewhere = await serve();
  try {
    const b = await browser();
    await b.page.goto(`${server.origin}/style.css`); // a document without the page's CSP
    await b.page.evaluate((url) => {
      const src = `fetch(${JSON.stringify(url)}).then(() => postMessage('done'), () => postMessage('done'))`;
      const w = new Worker(URL.createObjectURL(new Blob([src], { type: 'text/javascript' })));
      return new Promise((ok) => { w.onmessage = ok; });
    }, `${elsewhere.origin}/probe`);
    assert.ok(b.requests.includes(`${elsewhere.origin}/probe`), 'worker request not recorded');
    assert.throws(() => assertLocalOnly(assert, b.requests, server.origin));
    await b.context.close();
  } finally {
    await elsewhere.close();
  }
});

test('a recipe file loads into the form, and figures export as PNG and SVG', async () => {
  const b = await openPage();
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  const recipe = {
    format: 'popdecode-recipe/1',
    columns: { label: 'odour', group: null, features: ['unit_01', 'unit_02', 'unit_03'], drop_missing: false },
    classifier: 'shrinkage-lda', c: 1, folds: 4, repeats: 3, balance: false, shuffles: 0, shuffle_repeats: null, seed: 7,
  };
  const file = join(tmp, 'loaded.recipe.json');
  writeFileSync(file, JSON.stringify(recipe));
  await b.page.setInputFiles('#recipe-file', file);
  await b.page.waitForFunction(() => document.getElementById('recipe-status').textContent.startsWith('Loaded'));
  assert.equal(await b.page.inputValue('#classifier'), 'shrinkage-lda');
  assert.equal(await b.page.inputValue('#group'), '');
  assert.equal(await b.page.isChecked('#balance'), false);
  const headline = await runAndWait(b.page);
  assert.match(headline, /balanced accuracy/);
  const exported = JSON.parse(await downloadText(b.page, '#export-recipe'));
  assert.deepEqual(exported.columns.features, ['unit_01', 'unit_02', 'unit_03']);
  assert.equal(exported.seed, 7);
  const svg = await downloadText(b.page, '[data-figure=confusion] button[aria-label$="as SVG"]');
  assert.match(svg, /^<svg [^>]*xmlns="http:\/\/www.w3.org\/2000\/svg"/);
  const [dl] = await Promise.all([b.page.waitForEvent('download'), b.page.click('[data-figure=scores] button[aria-label$="as PNG"]')]);
  const png = readFileSync(await dl.path());
  assert.deepEqual([...png.subarray(0, 4)], [0x89, 0x50, 0x4e, 0x47], 'a PNG file');
  const csv = await downloadText(b.page, '#export-csv');
  assert.match(csv, /^kind,index,accuracy,balanced_accuracy\nrepeat,0,/);
  await b.context.close();
});

test('decoders side by side, labelled exploratory', async () => {
  const b = await openPage();
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page, { repeats: 2, shuffles: 0 });
  await runAndWait(b.page, '#compare-start');
  await shot(b.page, 'compare');
  const rows = await b.page.locator('#views table tr').count();
  assert.equal(rows, 8, 'a header and seven decoders');
  assert.match(await b.page.textContent('#views'), /Exploratory only/);
  assert.match(await b.page.textContent('#views table'), /shrinkage LDA\s*\d+\.\d\s%/);
  // Where it came from names every decoder and the split they shared (the example holds sessions out), not the one
  // decoder and the Folds setting of the form.
  const provenance = await b.page.textContent('#views .provenance');
  assert.match(provenance, /with every decoder \(C = 1 for those that take it\); leave one 'session' out \(Folds 5, at least the 4 groups\); 2 repeats; 0 shuffles/);
  assert.doesNotMatch(provenance, /linear SVM/);
  // Folds at or above the 4 sessions keeps each session held out in turn: nothing changed; Folds 3 splits the
  // sessions into 3 folds: stale (found by a review: it once stayed fresh).
  const folds = async (v) => { await b.page.fill('#folds', v); await b.page.dispatchEvent('#folds', 'change'); };
  await folds('6');
  await b.page.waitForFunction(() => /Folds \(6\) is at least/.test(document.getElementById('scheme').textContent));
  assert.equal(await b.page.textContent('#views .stale'), '');
  await folds('3');
  await b.page.waitForFunction(() => /Not the current settings/.test(document.querySelector('#views .stale').textContent));
  assert.match(await b.page.textContent('#views .stale'), /Folds \(5 → 3\)/);
  await folds('5');
  await b.page.waitForFunction(() => document.querySelector('#views .stale').textContent === '');
  // Another decoder on the form does not make the comparison stale (it ran them all); another C does.
  await b.page.selectOption('#classifier', 'shrinkage-lda');
  await b.page.dispatchEvent('#classifier', 'change');
  await b.page.fill('#c', '2');
  await b.page.dispatchEvent('#c', 'change');
  await b.page.waitForFunction(() => /Not the current settings/.test(document.querySelector('#views .stale').textContent));
  const stale = await b.page.textContent('#views .stale');
  assert.match(stale, /C \(1 → 2\)/);
  assert.doesNotMatch(stale, /Decoder/);
  assertLocalOnly(assert, b.requests, server.origin);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('the neuron analyses in the page give the command line\'s bytes', async () => {
  const b = await openPage();
  await b.page.click('#example');
  await b.page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(b.page, { repeats: 2, shuffles: 0 });
  await b.page.fill('#draws', '2');
  await runAndWait(b.page, '#neurons-start');
  await shot(b.page, 'neurons');
  for (const fig of ['[data-figure=dropping] img', '[data-figure=single] img', '[data-figure=weights] img']) assert.ok(await b.page.isVisible(fig), fig);
  assert.match(await b.page.textContent('#views'), /Activation patterns \(Haufe/);
  // The split it used, from its report (it once said "folds 5" while each session was held out).
  assert.match(await b.page.textContent('#views .provenance'), /leave one 'session' out \(Folds 5, at least the 4 groups\)/);
  const json = await downloadText(b.page, '#export-neurons');
  const report = JSON.parse(json);
  const recipeFile = join(tmp, 'neurons.recipe.json');
  writeFileSync(recipeFile, JSON.stringify(report.recipe));
  const out = join(tmp, 'neurons-cli.json');
  cli(['neurons', join(ROOT, 'samples', 'odours.csv'), '--recipe', recipeFile, '--draws', '2', '--quiet', '--json', out]);
  assert.equal(json, readFileSync(out, 'utf8'), 'page JSON and CLI JSON differ');
  assert.deepEqual(report.dropping.map((d) => d.size), [1, 2, 4, 8, 16, 32, 52]);
  // A caution that names no flag is shown as the result says it, word for word (the page once read "is expected to
  // be lower" as a parser's "expected …" and replaced it; found by a review).
  const shown = (await b.page.textContent('#views .view')).replace(/\s+/g, ' ');
  const plain = report.warnings.filter((w) => !w.includes('--'));
  assert.ok(plain.some((w) => /expected to be lower/.test(w)), 'the selection caution is among the warnings');
  for (const w of plain) assert.ok(shown.includes(w.replace(/`/g, '“').replace(/\s+/g, ' ')), `shown as said: ${w}`);
  assertLocalOnly(assert, b.requests, server.origin);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});
