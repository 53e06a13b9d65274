// The page's second version (issue 14): results are records that can never describe another run, a layout built
// for results at 390, 1366 and 1920 px, columns chosen without accidents, messages in the page's words, what will
// happen said before it happens, figures whose text stays inside and apart, keyboard focus, and axe-core
// (axe-core 4.14.1, pinned in package.json) clean in every state.
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { writeFileSync, readFileSync, mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { createRequire } from 'node:module';
import { serve, browser, closeAll, assertLocalOnly, shot, quickSettings, runAndWait, whenReady, download, ROOT, SLOW } from './helpers.mjs';

const require = createRequire(import.meta.url);
const AXE = readFileSync(require.resolve('axe-core/axe.min.js'), 'utf8');

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });
const tmp = mkdtempSync(join(tmpdir(), 'popdecode-records-'));

async function openPage(query = '?workers=2', width = 1366) {
  const b = await browser();
  b.console = [];
  b.page.on('console', (m) => { if (m.type() === 'error') b.console.push(m.text()); });
  await b.page.setViewportSize({ width, height: 900 });
  await b.page.goto(`${server.origin}/index.html${query}`);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  return b;
}

async function example(page) {
  await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(page);
  await whenReady(page);
}

async function set(page, id, value) {
  await page.fill('#' + id, String(value));
  await page.dispatchEvent('#' + id, 'change');
}

/// axe-core on the current state: no serious or critical violation.
async function axe(page, state) {
  await page.evaluate(AXE);
  const found = await page.evaluate(async () => {
    const r = await window.axe.run(document, { resultTypes: ['violations'] });
    return r.violations.filter((v) => ['serious', 'critical'].includes(v.impact))
      .map((v) => `${v.id}: ${v.help} (${v.nodes.slice(0, 3).map((n) => n.target.join(' ')).join(' | ')})`);
  });
  assert.deepEqual(found, [], `axe-core in state '${state}'`);
}

async function noPageScroll(page, state) {
  const { scroll, width } = await page.evaluate(() => ({ scroll: document.documentElement.scrollWidth, width: window.innerWidth }));
  assert.ok(scroll <= width, `page scrolls sideways in state '${state}': ${scroll} > ${width}`);
}

/// Every figure on view is drawn at 85 % of its own size or more, so its 12 px text is at least 10 px on screen
/// (a figure wider than its place scrolls in its own box).
async function readableFigures(page, state) {
  const scales = await page.locator('#views figure img').evaluateAll((imgs) => imgs.map((i) => ({
    name: i.closest('figure').dataset.figure, scale: i.getBoundingClientRect().width / Number(i.getAttribute('width')),
  })));
  assert.ok(scales.length > 0, `no figures in state '${state}'`);
  for (const { name, scale } of scales) assert.ok(scale >= 0.84, `figure ${name} drawn at ${scale.toFixed(2)} of its size in state '${state}'`);
}

const csvFile = (name, text) => { const f = join(tmp, name); writeFileSync(f, text); return f; };

test('a result is a record: stale after a file or setting change, exports from the record, cancel changes nothing', SLOW, async () => {
  const b = await openPage();
  const { page } = b;
  await example(page);
  await runAndWait(page);
  const first = await download(page, '#export-json');
  assert.equal(first.name, 'odours-run1-result.json');
  const recipe1 = await download(page, '#export-recipe');
  assert.equal(recipe1.name, 'odours-run1.recipe.json');
  assert.equal(await page.locator('#views .stale').textContent(), '', 'fresh results are not marked');
  assert.match(await page.textContent('#views .provenance'), /From odours\.csv \(SHA-256 [0-9a-f]{64}\), with linear SVM/);

  // A setting changes: marked in words, with one click to run again.
  await set(page, 'repeats', 3);
  await page.waitForFunction(() => /Not the current settings/.test(document.querySelector('#views .stale').textContent));
  assert.match(await page.textContent('#views .stale'), /Repeats \(4 → 3\)/);
  await shot(page, 'stale-setting-1366');
  await axe(page, 'stale');
  await set(page, 'repeats', 4);
  await page.waitForFunction(() => document.querySelector('#views .stale').textContent === '');

  // Another file: marked, and every export still comes from run 1 and is named from it.
  const other = csvFile('other.csv', 'stimulus,u1,u2\n' + Array.from({ length: 40 }, (_, i) => `${i % 2 ? 'grating' : 'blank'},${(i % 2) * 3 + Math.sin(i)},${Math.cos(i)}`).join('\n') + '\n');
  await page.setInputFiles('#file', other);
  await page.waitForFunction(() => /the data \(now other\.csv\)/.test(document.querySelector('#views .stale').textContent));
  const again = await download(page, '#export-json');
  assert.equal(again.name, 'odours-run1-result.json');
  assert.equal(again.text, first.text);
  assert.equal((await download(page, '#export-recipe')).text, recipe1.text);
  await shot(page, 'stale-file-1366');

  // Run again from the stale note: a second record, on view, fresh; the first is still in the list.
  await whenReady(page);
  await page.locator('#views .stale button').click();
  await page.waitForFunction(() => document.querySelectorAll('#records li').length === 2, null, { timeout: 300_000 });
  assert.match(await page.textContent('#views .view h3'), /Run 2/);
  assert.equal(await page.locator('#views .stale').textContent(), '');
  assert.equal((await download(page, '#export-json')).name, 'other-run2-result.json');

  // A cancelled run: nothing on view or in the exports changes.
  // Long enough to be cancelled on any machine (each shuffle runs min(repeats, 10) repeats: 5 million fits).
  await set(page, 'repeats', 4000);
  await set(page, 'shuffles', 100000);
  await whenReady(page);
  await page.click('#start');
  // A run this long asks first (unless this computer would finish it within the minute).
  await page.waitForFunction(() => !document.getElementById('confirm').hidden ||
    /fits \(\d+\s%\)/.test(document.getElementById('progress-text').textContent), null, { timeout: 300_000 });
  if (await page.isVisible('#confirm')) await page.click('#confirm-yes');
  await page.waitForFunction(() => /fits \(\d+\s%\)/.test(document.getElementById('progress-text').textContent), null, { timeout: 300_000 });
  await axe(page, 'running');
  await shot(page, 'running-1366');
  await page.click('#cancel');
  await page.waitForFunction(() => document.getElementById('progress-text').textContent.startsWith('Cancelled'));
  assert.equal(await page.locator('#records li').count(), 2);
  const after = await download(page, '#export-json');
  assert.equal(after.name, 'other-run2-result.json');
  assert.equal(JSON.parse(after.text).recipe.repeats, 4, 'the record on view still holds its own recipe');

  // Two records side by side, each with its own heading and provenance.
  await page.getByRole('button', { name: 'Side by side: run 1 beside run 2' }).click();
  assert.equal(await page.locator('#views .view').count(), 2);
  await shot(page, 'side-by-side-1366');
  await page.setViewportSize({ width: 1920, height: 1000 });
  await shot(page, 'side-by-side-1920');
  assert.deepEqual(b.errors, []);
  assert.deepEqual(b.console, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('feature checklist: arrow keys change nothing, filter with a pattern, all and none', async () => {
  const b = await openPage();
  const { page } = b;
  await example(page);
  const count = () => page.textContent('#feature-count');
  assert.equal(await count(), '(52 of 52 chosen)');
  await page.focus('#feature-0');
  for (const key of ['ArrowDown', 'ArrowDown', 'ArrowUp', 'ArrowRight', 'End', 'Home']) await page.keyboard.press(key);
  assert.equal(await count(), '(52 of 52 chosen)', 'arrow keys must not change the selection');
  await page.click('label[for=feature-3]');
  assert.equal(await count(), '(51 of 52 chosen)', 'a click changes only its own box');
  await page.fill('#feature-filter', 'unit_0*');
  assert.equal(await page.locator('#features input').count(), 9);
  await page.click('#features-none');
  assert.equal(await count(), '(43 of 52 chosen)');
  // The neurons left out are part of where a result came from (found by a review: only a count said so).
  await quickSettings(page, { repeats: 2, shuffles: 0 });
  await runAndWait(page);
  assert.match(await page.textContent('#views .provenance'),
    /every feature but 'unit_01', 'unit_02', 'unit_03', 'unit_04', 'unit_05', 'unit_06', 'unit_07', 'unit_08' and 1 more/);
  await page.fill('#feature-filter', '');
  await page.click('#features-all');
  assert.equal(await count(), '(52 of 52 chosen)');
  await page.waitForFunction(() => /Feature columns/.test(document.querySelector('#views .stale').textContent));
  await axe(page, 'loaded');
  await b.context.close();
});

test('a numeric condition column is chosen as label; a trial counter is left out of the features, in words', async () => {
  const b = await openPage();
  const { page } = b;
  const rows = Array.from({ length: 48 }, (_, i) => `${i + 1},${(i % 4) + 1},${i < 24 ? 1 : 2},${(i % 4) * 2 + Math.sin(i)},${Math.cos(i)},${(i % 3) + Math.sin(2 * i)}`);
  await page.setInputFiles('#file', csvFile('coded.csv', 'trial,condition,block,u1,u2,u3\n' + rows.join('\n') + '\n'));
  await page.waitForSelector('#data-view:not([hidden])');
  assert.equal(await page.inputValue('#label'), 'condition');
  assert.equal(await page.textContent('#feature-count'), '(4 of 5 chosen)');
  assert.match(await page.textContent('#features-note'), /'trial' counts 1, 2, 3, … down the file like a trial number, so it is left out of the features/);
  await quickSettings(page, { repeats: 2, shuffles: 0 });
  const headline = await runAndWait(page);
  assert.match(headline, /'condition' decoded at/);
  const recipe = JSON.parse((await download(page, '#export-recipe')).text);
  assert.deepEqual(recipe.columns.ignore, ['trial']);
  // Ticked again, the counter is named among the features (the core leaves a counter out of "every other column",
  // as this page does), decoded, and cautioned in the page's words.
  await page.click('label[for=feature-0]');
  assert.equal(await page.textContent('#feature-count'), '(5 of 5 chosen)');
  await runAndWait(page);
  const ticked = JSON.parse((await download(page, '#export-recipe')).text);
  assert.deepEqual(ticked.columns.features, ['trial', 'block', 'u1', 'u2', 'u3']);
  const results = await page.textContent('#results');
  assert.match(results, /column 'trial' counts up by one on every row, like a trial number, and is used as a feature; leave it out \(untick it in the feature list\)/);
  await b.context.close();
});

test('a mistyped label value does not make a neuron the label; a trial table in binned mode is named as such', async () => {
  const b = await openPage();
  const { page } = b;
  // Four odours on 12 trials each, one mistyped; three neurons of small counts (0–3, each on 12 trials), which a
  // guess by "a handful of values" alone would take for a coded condition.
  const odours = ['eugenol', 'citral', 'limonene', 'vanillin'];
  const rows = Array.from({ length: 48 }, (_, i) => `t${i + 1},${i === 6 ? 'eugenoll' : odours[i % 4]},${(i * 7) % 4},${(i * 3) % 4},${(i * 5 + 1) % 4}`);
  const file = csvFile('typo.csv', 'trial,odour,u1,u2,u3\n' + rows.join('\n') + '\n');
  await page.setInputFiles('#file', file);
  await page.waitForSelector('#data-view:not([hidden])');
  assert.equal(await page.inputValue('#label'), 'odour');
  // The same table where a binned table is expected: the message says what it looks like and what to choose.
  await page.check('input[name=kind][value=binned]');
  await page.setInputFiles('#file', file);
  await page.waitForSelector('#data-error:not([hidden])');
  const error = await page.textContent('#data-error');
  assert.match(error, /typo\.csv, line 2, column 'odour': 'eugenol' is not a number \(bin time in seconds\); column 'odour' holds text from its first row, so this looks like a table with one row per trial: choose “one row per trial” under “What the data hold”/);
  assert.doesNotMatch(error, /--[a-z]/);
  await b.context.close();
});

test('messages speak the page\'s words: no flags, no parser words; settings problems beside their fields', async () => {
  const b = await openPage();
  const { page } = b;
  const FLAG_OR_PARSER = /--[a-z]|expected (usize|u64|f64|a )|invalid type|missing field|at line \d+ column \d+|`/;
  // A missing value: the core's message names a command-line flag; the page names its checkbox.
  await page.setInputFiles('#file', csvFile('gaps.csv', 'odour,n1,n2\na,1,2\nb,3,4\na,,1\nb,1,1\na,2,2\nb,3,3\n'));
  await page.waitForSelector('#data-error:not([hidden])');
  const gap = await page.textContent('#data-error');
  assert.match(gap, /gaps\.csv, line 4, column 'n1': empty cell is a missing value/);
  assert.match(gap, /“Drop trials with missing values”/);
  assert.doesNotMatch(gap, FLAG_OR_PARSER);
  await axe(page, 'error');
  await shot(page, 'error-390-wide');
  // A recipe file of the wrong shape.
  const bad = csvFile('bad.recipe.json', JSON.stringify({ format: 'popdecode-recipe/1', columns: { label: 'odour' }, classifier: 'linear-svm', repeats: 'many' }));
  await page.setInputFiles('#recipe-file', bad);
  await page.waitForFunction(() => /could not be loaded/.test(document.getElementById('recipe-status').textContent));
  const status = await page.textContent('#recipe-status');
  assert.doesNotMatch(status, FLAG_OR_PARSER, status);
  // A recipe cut short: the parser's "EOF while parsing" in words.
  await page.setInputFiles('#recipe-file', csvFile('cut.recipe.json', '{"format": "popdecode-recipe/1", "columns": {'));
  await page.waitForFunction(() => /ends too early/.test(document.getElementById('recipe-status').textContent));
  assert.doesNotMatch(await page.textContent('#recipe-status'), FLAG_OR_PARSER);
  // Settings problems beside their fields, in words.
  await example(page);
  await set(page, 'shuffles', '-1');
  await page.waitForSelector('#shuffles-error');
  assert.equal(await page.textContent('#shuffles-error'), 'Shuffles must be a whole number, 0 or more.');
  assert.match(await page.getAttribute('#shuffles', 'aria-describedby'), /shuffles-error/);
  assert.equal(await page.isDisabled('#start'), true);
  await set(page, 'folds', '1');
  await page.waitForSelector('#folds-error');
  assert.doesNotMatch(await page.textContent('#settings'), FLAG_OR_PARSER);
  await axe(page, 'settings problem');
  await set(page, 'shuffles', '6');
  await set(page, 'folds', '5');
  await whenReady(page);
  await b.context.close();
});

test('what will happen is said before it happens: scheme in words, identical repeats, fits and time, buttons', async () => {
  const b = await openPage();
  const { page } = b;
  assert.equal(await page.isDisabled('#compare-start'), true, 'compare is disabled without data');
  assert.equal(await page.isDisabled('#neurons-start'), true, 'neurons is disabled without data');
  assert.match(await page.textContent('#layout-examples'), /trial.*odour.*unit_01/s);
  await axe(page, 'empty');
  await example(page);
  assert.match(await page.textContent('#data-status'), /The example sets the Group column to 'session'/);
  assert.match(await page.textContent('#scheme'), /leave one 'session' out \(4 groups held out in turn\): Folds \(5\) is at least the number of groups/);
  await page.selectOption('#group', '');
  await page.waitForFunction(() => /5 folds, stratified/.test(document.getElementById('scheme').textContent));
  // The time comes from one task timed in a worker of its own, after the plan.
  await page.waitForFunction(() => /on this computer\./.test(document.getElementById('estimate').textContent));
  assert.match(await page.textContent('#estimate'), /\d+ fits in \d+ tasks on 2 workers: (about \d.*|under a second) on this computer/);
  assert.equal(await page.isDisabled('#compare-start'), false);
  // A long run asks first; "Not now" starts nothing.
  await set(page, 'repeats', 100000);
  await page.waitForFunction(() => /about [\d.]+ (min|h)/.test(document.getElementById('estimate').textContent), null, { timeout: 300_000 });
  await page.click('#start');
  await page.waitForSelector('#confirm:not([hidden])');
  assert.match(await page.textContent('#confirm-text'), /should take about .* Start it\?/);
  await page.click('#confirm-no');
  assert.equal(await page.locator('#records li').count(), 0);
  // Spike events: identical repeats noticed (equal classes, every session held out in turn).
  await page.check('input[name=kind][value=events]');
  assert.match(await page.textContent('#layout-examples'), /neuron/);
  await page.setInputFiles('#trials-file', join(ROOT, 'samples', 'odour_trials.csv'));
  await page.waitForFunction(() => /Now the spike events file/.test(document.getElementById('data-status').textContent));
  await page.setInputFiles('#events-file', join(ROOT, 'samples', 'odour_spikes.csv'));
  await page.waitForFunction(() => document.getElementById('data-status').textContent === '');
  await page.selectOption('#group', 'session');
  await page.waitForSelector('#identical-note');
  assert.match(await page.textContent('#identical-note'), /Every repeat would be identical/);
  await page.click('#identical-note button');
  assert.equal(await page.inputValue('#repeats'), '1');
  // Swapped files are noticed.
  await page.setInputFiles('#trials-file', join(ROOT, 'samples', 'odour_spikes.csv'));
  await page.setInputFiles('#events-file', join(ROOT, 'samples', 'odour_trials.csv'));
  await page.waitForSelector('#swap-note');
  await page.click('#swap-note button');
  await page.waitForFunction(() => !document.getElementById('swap-note'));
  await whenReady(page);
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('keyboard: focus moves to the results heading after a run started from the keyboard', async () => {
  const b = await openPage();
  const { page } = b;
  await example(page);
  await page.focus('#start');
  const before = await page.locator('#records li').count();
  await page.keyboard.press('Enter');
  await page.waitForFunction((n) => document.querySelectorAll('#records li').length > n, before, { timeout: 300_000 });
  assert.equal(await page.evaluate(() => document.activeElement.tagName + ':' + document.activeElement.textContent), 'H3:Run 1: decoding');
  const names = await page.locator('#views button').evaluateAll((bs) => bs.map((x) => x.getAttribute('aria-label') || x.textContent));
  for (const fig of ['scores over repeats', 'shuffle null', 'confusion matrix']) {
    assert.ok(names.includes(`Save the ${fig} figure as PNG`) && names.includes(`Save the ${fig} figure as SVG`), fig);
  }
  await b.context.close();
});

// Every figure the page can draw, for the layout test of text boxes.
async function allFigures() {
  const b = await openPage();
  const { page } = b;
  const svgs = {};
  const collect = async (tag) => {
    const found = await page.locator('#views .view').first().locator('figure').evaluateAll((fs) => fs.map((f) => f.dataset.figure));
    for (const name of found) {
      svgs[`${tag}/${name}`] = (await download(page, `[data-figure=${name}] button[aria-label$="as SVG"]`)).text;
    }
  };
  await example(page);
  await runAndWait(page);
  await collect('table');
  await axe(page, 'results: decoding');
  for (const width of [390, 1366, 1920]) {
    await page.setViewportSize({ width, height: 900 });
    await noPageScroll(page, `results at ${width}`);
    await readableFigures(page, `results at ${width}`);
    await shot(page, `results-${width}`);
  }
  await page.setViewportSize({ width: 1366, height: 900 });
  await quickSettings(page, { repeats: 2, shuffles: 3 });
  await runAndWait(page);
  await collect('table-few');
  await set(page, 'draws', 2);
  await runAndWait(page, '#neurons-start');
  await collect('neurons');
  await axe(page, 'results: neurons');
  await page.setViewportSize({ width: 390, height: 900 });
  await noPageScroll(page, 'neurons at 390');
  await readableFigures(page, 'neurons at 390');
  await shot(page, 'neurons-390');
  await page.setViewportSize({ width: 1920, height: 1000 });
  await readableFigures(page, 'neurons at 1920');
  await shot(page, 'neurons-1920');
  await page.setViewportSize({ width: 1366, height: 900 });
  await runAndWait(page, '#compare-start');
  await axe(page, 'results: compare');
  assert.match(await page.textContent('#views table'), /score, mean over repeats/);
  assert.match(await page.textContent('#views'), /Exploratory only/);
  await page.setViewportSize({ width: 390, height: 900 });
  await noPageScroll(page, 'compare at 390');
  await shot(page, 'compare-390');
  await page.setViewportSize({ width: 1366, height: 900 });
  await page.check('input[name=kind][value=events]');
  await page.click('#example-events');
  // Enough shuffles for a cluster to reach p < 0.05, so the curve's legend names the cluster bar too.
  await quickSettings(page, { repeats: 3, shuffles: 24 });
  await set(page, 'width', 0.2);
  await set(page, 'step', 0.1);
  await page.check('#generalize');
  await page.dispatchEvent('#generalize', 'change');
  await runAndWait(page);
  await collect('time');
  await axe(page, 'results: time course');
  for (const width of [390, 1366, 1920]) {
    await page.setViewportSize({ width, height: 900 });
    await noPageScroll(page, `time course at ${width}`);
    await readableFigures(page, `time course at ${width}`);
    await shot(page, `timecourse-${width}`);
  }
  assert.deepEqual(b.errors, []);
  assert.deepEqual(b.console, []);
  await b.context.close();
  return svgs;
}

test('every figure: text inside the figure, no two text boxes overlapping, no text across a marker line (getBBox)', SLOW, async () => {
  const svgs = await allFigures();
  // Every kind of figure the page draws, including few repeats, a linear decoder's weights and a time course with
  // a significant cluster and temporal generalization.
  for (const name of ['table/scores', 'table/null', 'table/confusion', 'table-few/scores', 'table-few/null', 'neurons/dropping',
    'neurons/single', 'neurons/weights', 'time/curve', 'time/generalization']) {
    assert.ok(svgs[name], `figure ${name} missing among ${Object.keys(svgs).join(', ')}`);
  }
  assert.match(svgs['time/curve'], /significant cluster \(p &lt; 0\.05\)/);
  // The weights figure shows every neuron (52) and every output (4 odours), on numeric axes.
  assert.equal((svgs['neurons/weights'].match(/<title>unit_\d+<\/title>/g) || []).length, 52);
  for (const odour of ['citral', 'eugenol', 'hexanal', 'limonene']) assert.match(svgs['neurons/weights'], new RegExp(`>${odour}</text>`));
  assert.match(svgs['neurons/weights'], />−?\d+(\.\d+)?<\/text>/);
  // Controls the check must catch: two labels on top of each other, one running off the right edge, one across a
  // marker line.
  svgs['control/bad'] = '<svg xmlns="http://www.w3.org/2000/svg" width="100" height="50"><text x="10" y="20">overlap</text>' +
    '<text x="12" y="22">overlap too</text><text x="90" y="45">outside</text>' +
    '<path class="marker" d="M40 30 V50" stroke="black"/><text x="36" y="45">x</text></svg>';
  const b = await browser();
  await b.page.setContent('<!doctype html><body></body>');
  const problems = await b.page.evaluate((all) => {
    const out = [];
    // A box in the figure's coordinates (rotated labels: transform the corners).
    const box = (e) => {
      const r = e.getBBox();
      const m = e.getCTM();
      const pts = [[r.x, r.y], [r.x + r.width, r.y], [r.x, r.y + r.height], [r.x + r.width, r.y + r.height]]
        .map(([x, y]) => [m.a * x + m.c * y + m.e, m.b * x + m.d * y + m.f]);
      const xs = pts.map((p) => p[0]); const ys = pts.map((p) => p[1]);
      return { x0: Math.min(...xs), x1: Math.max(...xs), y0: Math.min(...ys), y1: Math.max(...ys) };
    };
    const cross = (a, c, by) => Math.min(a.x1, c.x1) - Math.max(a.x0, c.x0) > by && Math.min(a.y1, c.y1) - Math.max(a.y0, c.y0) > by;
    for (const [name, text] of Object.entries(all)) {
      const doc = new DOMParser().parseFromString(text, 'image/svg+xml');
      const svg = document.importNode(doc.documentElement, true);
      document.body.replaceChildren(svg);
      const w = Number(svg.getAttribute('width'));
      const h = Number(svg.getAttribute('height'));
      const boxes = [...svg.querySelectorAll('text')].filter((t) => t.textContent.trim())
        .map((t) => ({ text: t.textContent, ...box(t) }));
      for (const a of boxes) {
        if (a.x0 < -0.5 || a.y0 < -0.5 || a.x1 > w + 0.5 || a.y1 > h + 0.5) out.push(`${name}: '${a.text}' leaves the figure`);
      }
      for (let i = 0; i < boxes.length; i++) {
        for (let j = i + 1; j < boxes.length; j++) {
          if (cross(boxes[i], boxes[j], 1)) out.push(`${name}: '${boxes[i].text}' overlaps '${boxes[j].text}'`);
        }
      }
      // Marker lines (chance, thresholds, means, observed scores): a line's box is one pixel wide or tall.
      for (const m of svg.querySelectorAll('path.marker')) {
        const r = box(m);
        const line = { x0: r.x0 - 1, x1: r.x1 + 1, y0: r.y0 - 1, y1: r.y1 + 1 };
        for (const a of boxes) if (cross(a, line, 0)) out.push(`${name}: '${a.text}' crosses a marker line`);
      }
    }
    return out;
  }, svgs);
  assert.deepEqual(problems.filter((p) => p.startsWith('control/')).sort(),
    ["control/bad: 'outside' leaves the figure", "control/bad: 'overlap' overlaps 'overlap too'", "control/bad: 'x' crosses a marker line"].sort());
  assert.deepEqual(problems.filter((p) => !p.startsWith('control/')), []);
  await b.context.close();
});

test('the empty, loaded and error states at 390 px: one column, no sideways scroll of the page', async () => {
  const b = await openPage('?workers=2', 390);
  const { page } = b;
  await noPageScroll(page, 'empty');
  await shot(page, 'empty-390');
  await example(page);
  await noPageScroll(page, 'loaded');
  await shot(page, 'loaded-390');
  await page.setViewportSize({ width: 1920, height: 1000 });
  await shot(page, 'loaded-1920');
  await page.setViewportSize({ width: 390, height: 900 });
  await page.setInputFiles('#file', csvFile('ragged.csv', 'odour,n1,n2\na,1,2\nb,3\n'));
  await page.waitForSelector('#data-error:not([hidden])');
  await noPageScroll(page, 'error');
  await axe(page, 'error at 390');
  await b.context.close();
});
