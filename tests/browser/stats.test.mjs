// The statistics the page shows beside the score: the confidence interval with its method, the variability over
// repeats named as such, effect size, per-class p-values, pairwise decoding, every caution of the result, the
// null of the generalization matrix and the single-neuron tests. Each number on the page is compared with the
// result JSON it came from, and the JSON with the command line's.
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { writeFileSync, readFileSync, mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { serve, browser, closeAll, assertLocalOnly, shot, quickSettings, runAndWait, downloadText, cli, ROOT, SLOW } from './helpers.mjs';

// A p- or q-value as the command line's text writes it (three decimals; two significant digits in exponent form
// below 0.001), which the page's tables follow so that they agree with the headline.
const coreP = (v) => (v < 0.001 ? v.toExponential(1) : v.toFixed(3));

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });

const tmp = mkdtempSync(join(tmpdir(), 'popdecode-browser-stats-'));
// The page's own rounding of a fraction (util.js), so that the comparison is of numbers, not of formatting.
const pct = (v) => (100 * v).toFixed(1) + '\u00a0%';

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

async function tick(page, id, on) {
  await page.setChecked('#' + id, on);
  await page.dispatchEvent('#' + id, 'change');
}

// Click a button found by its accessible name in the record on view; the saved file's name and text.
async function save(page, name) {
  const [dl] = await Promise.all([page.waitForEvent('download'), page.locator('#views .view').first().getByRole('button', { name }).click()]);
  return { name: dl.suggestedFilename(), text: readFileSync(await dl.path(), 'utf8') };
}

// The cells of a table on view (header row first), as text.
function cells(page, selector) {
  return page.$$eval(`#views .view ${selector} tr`, (rows) => rows.map((tr) => [...tr.children].map((c) => c.textContent)));
}

test('pairwise decoding: the page\'s JSON is the command line\'s, and every interval, p-value and pair shown is the JSON\'s', SLOW, async () => {
  const b = await openPage();
  const { page } = b;
  await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(page, { repeats: 4, shuffles: 6 });
  await tick(page, 'pairwise', true);
  await runAndWait(page);
  await shot(page, 'pairwise-results');
  const json = await downloadText(page, '#export-json');
  const recipe = await downloadText(page, '#export-recipe');
  assert.equal(JSON.parse(recipe).pairwise, true, 'the exported recipe asks for pairwise decoding');

  // The command line, given the page's recipe without its pairwise switch and asked for pairwise decoding.
  const plain = JSON.parse(recipe);
  delete plain.pairwise;
  const recipeFile = join(tmp, 'plain.recipe.json');
  writeFileSync(recipeFile, JSON.stringify(plain, null, 2));
  const out = join(tmp, 'pairwise-cli.json');
  cli(['decode', join(ROOT, 'samples', 'odours.csv'), '--recipe', recipeFile, '--pairwise', '--quiet', '--json', out]);
  assert.equal(json, readFileSync(out, 'utf8'), 'page JSON and CLI JSON differ');

  const r = JSON.parse(json);
  const s = r.summary;
  // Scores: the interval is the JSON's, the spread is labelled as variability over repeats.
  const scores = await cells(page, 'table.scores');
  assert.match(scores[0][2], /95 % confidence interval/);
  assert.match(scores[0][3], /SD over repeats/);
  assert.match(scores[0][4], /percentile over repeats/);
  assert.match(await page.textContent('#views .view table.scores caption'), /variability over those repeats .*not a confidence interval/);
  for (const [i, key] of [[1, 'accuracy'], [2, 'balanced_accuracy']]) {
    assert.equal(scores[i][1], pct(s[key].mean));
    assert.equal(scores[i][2], `${pct(s[key].ci[0])} to ${pct(s[key].ci[1])}`, `${key}: interval shown`);
    assert.equal(scores[i][3], pct(s[key].sd));
    assert.deepEqual([scores[i][4], scores[i][5]], [pct(s[key].p2_5), pct(s[key].p97_5)]);
  }
  assert.equal(scores.length, 3, 'four classes: no AUC row');
  assert.equal(await page.textContent('#views .view .ci-method'), `95 % confidence interval of the mean: ${s.accuracy.ci_method}.`);
  // Effect size: κ and its interval.
  const effect = await page.$$eval('#views .view table', (ts) => {
    const t = ts.find((x) => /Effect size/.test(x.caption.textContent));
    return [...t.querySelectorAll('tr')].map((tr) => [...tr.children].map((c) => c.textContent));
  });
  assert.equal(effect[1][1], `${(100 * s.effect_size.above_chance).toFixed(1)} points`);
  const [low, high] = s.effect_size.above_chance_ci;
  assert.equal(effect[1][2], `${(100 * low).toFixed(1)} to ${(100 * high).toFixed(1)} points`);
  assert.equal(effect[2][1], s.effect_size.kappa.toFixed(3));
  assert.equal(effect[2][2], `${s.effect_size.kappa_ci[0].toFixed(3)} to ${s.effect_size.kappa_ci[1].toFixed(3)}`);
  // Per-class recall beside its own p-value.
  const recall = await cells(page, 'table.recall');
  assert.equal(recall.length, r.classes.length + 1);
  r.classes.forEach((c, i) => {
    const p = r.shuffle.recall_p_values[i];
    assert.deepEqual(recall[i + 1], [c, String(r.class_counts[i]), pct(s.recall[i]),
      (Math.abs(p - 1 / (r.shuffle.count + 1)) < 1e-12 ? '≤ ' : '') + coreP(p)]);
  });
  // Every pair, in the JSON's order, with its interval, p and q.
  const pairs = await cells(page, 'table.pairwise');
  assert.equal(r.pairwise.pairs.length, 6);
  assert.equal(pairs.length, 7);
  // Balanced classes: every pair leads with accuracy, named in the heading.
  assert.ok(r.pairwise.pairs.every((p) => p.headline === 'accuracy'));
  assert.equal(pairs[0][1], 'accuracy, mean over repeats');
  r.pairwise.pairs.forEach((p, i) => {
    const row = pairs[i + 1];
    const sp = p[p.headline];
    assert.equal(row[0], `${p.classes[0]} vs ${p.classes[1]}`);
    assert.equal(row[1], pct(sp.mean));
    assert.equal(row[2], `${pct(sp.ci[0])} to ${pct(sp.ci[1])}`);
    assert.equal(row[3], pct(p.auc.mean));
    assert.equal(row[5], coreP(p.q_value));
    assert.equal(row[6], p.discovery ? 'yes' : 'no');
  });
  assert.ok(await page.isVisible('#views [data-figure=pairwise] img'), 'the pairwise heatmap is shown');
  // The exports: the heatmap as SVG (the core's figure) and the pairwise table as CSV with the JSON's numbers.
  const svg = await save(page, 'Save the pairwise decoding figure as SVG');
  assert.match(svg.name, /-pairwise\.svg$/);
  assert.match(svg.text, /^<svg/);
  const csv = (await save(page, /Save the pairwise decoding of run \d+ as CSV/)).text;
  const lines = csv.trim().split('\n');
  assert.equal(lines.length, 7);
  r.pairwise.pairs.forEach((p, i) => {
    const f = lines[i + 1].split(',');
    assert.equal(Number(f[3]), p[p.headline].mean);
    assert.deepEqual([Number(f[4]), Number(f[5])], p[p.headline].ci);
    assert.equal(Number(f[9]), p.q_value);
  });
  assert.match(await page.textContent('#cli-line'), /--pairwise/);
  // Turning pairwise decoding off marks the result as not matching.
  await tick(page, 'pairwise', false);
  await page.waitForFunction(() => /Also decode every pair of conditions \(on → off\)/.test(document.querySelector('#views .stale').textContent));
  assert.deepEqual(b.errors, []);
  assertLocalOnly(assert, b.requests, server.origin);
  await b.context.close();
});

test('every caution of a result is on the page, in the page\'s words (leave-one-out)', async () => {
  const b = await openPage();
  const { page } = b;
  await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(page, { repeats: 3, shuffles: 0 });
  // The example groups by session; without groups, leave-one-out proper.
  await page.selectOption('#group', '');
  await page.dispatchEvent('#group', 'change');
  await set(page, 'folds', 'loo');
  await runAndWait(page);
  const r = JSON.parse(await downloadText(page, '#export-json'));
  assert.ok(r.warnings.some((w) => /leave-one-out/i.test(w)), 'leave-one-out is cautioned in the JSON');
  const shown = await page.$$eval('#views .view ul.warnings li:not(.info)', (lis) => lis.map((li) => li.textContent));
  const expected = await page.evaluate((ws) => ws.map((w) => window.PD.pageWords(w)), r.warnings);
  assert.deepEqual(shown, expected, 'every warning of the JSON, in order');
  assert.doesNotMatch(await page.textContent('#views'), /--[a-z]/, 'no command-line flag in the results');
  await b.context.close();
});

test('the generalization null reaches the recipe and the record; changing it marks the result as not matching', async () => {
  const b = await openPage();
  const { page } = b;
  await page.check('input[name=kind][value=events]');
  await page.click('#example-events');
  await page.waitForFunction(() => /Trials per class/.test(document.getElementById('classes').textContent));
  await quickSettings(page, { repeats: 2, shuffles: 4 });
  await set(page, 'width', 0.2);
  await set(page, 'step', 0.2);
  await set(page, 't-start', 0);
  await set(page, 't-end', 0.8);
  assert.equal(await page.isDisabled('#generalization-null'), true, 'no matrix, no null to choose');
  await tick(page, 'generalize', true);
  await page.waitForFunction(() => !document.getElementById('generalization-null').disabled);
  assert.equal(await page.inputValue('#generalization-null'), 'training-labels', 'the recommended null by default');
  await page.selectOption('#generalization-null', 'all-labels');
  await runAndWait(page);
  const recipe = JSON.parse(await downloadText(page, '#export-recipe'));
  assert.equal(recipe.time.generalization_null, 'all-labels');
  const json = await downloadText(page, '#export-json');
  const r = JSON.parse(json);
  assert.equal(r.generalization.null_method, 'all-labels');
  // The command line on the page's recipe gives the same bytes.
  const recipeFile = join(tmp, 'null.recipe.json');
  writeFileSync(recipeFile, JSON.stringify(recipe, null, 2));
  const out = join(tmp, 'null-cli.json');
  cli(['timecourse', '--events', join(ROOT, 'samples', 'odour_spikes.csv'), '--trials', join(ROOT, 'samples', 'odour_trials.csv'),
    '--recipe', recipeFile, '--quiet', '--json', out]);
  assert.equal(json, readFileSync(out, 'utf8'), 'page JSON and CLI JSON differ');
  // The matrix's caveat for its null is among the cautions shown.
  const shown = await page.$$eval('#views .view ul.warnings li', (lis) => lis.map((li) => li.textContent));
  assert.ok(shown.some((w) => /all-labels null/.test(w)), 'the all-labels caveat is shown');
  assert.match(await page.textContent('#views .view .provenance'), /every label shuffled/);
  // The recipe saved from the form carries the choice too.
  const saved = JSON.parse(await downloadText(page, '#save-recipe'));
  assert.equal(saved.time.generalization_null, 'all-labels');
  await page.selectOption('#generalization-null', 'training-labels');
  await page.waitForFunction(() => /Null for the generalization matrix \(every label shuffled → training labels shuffled\)/
    .test(document.querySelector('#views .stale').textContent));
  assert.ok(await page.locator('#views .view.is-stale').count(), 'the record is marked');
  await page.selectOption('#generalization-null', 'all-labels');
  await page.waitForFunction(() => !document.querySelector('#views .view').classList.contains('is-stale'));
  assert.deepEqual(b.errors, []);
  await b.context.close();
});

test('single neurons: p- and q-values shown are the JSON\'s, with the winner\'s curse among the cautions', async () => {
  const b = await openPage();
  const { page } = b;
  await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  await quickSettings(page, { repeats: 2, shuffles: 4 });
  await set(page, 'draws', 2);
  await tick(page, 'neuron-shuffles', true);
  await runAndWait(page, '#neurons-start');
  const r = JSON.parse(await downloadText(page, '#export-neurons'));
  assert.equal(r.recipe.shuffles, 4);
  assert.equal(r.fdr, 0.05);
  const rows = await cells(page, 'table.single');
  assert.equal(rows.length, r.single.length + 1);
  assert.match(rows[0].join('|'), /p \(own shuffles\)\|q \(adjusted across neurons\)/);
  r.single.forEach((n, i) => {
    const row = rows[i + 1];
    assert.equal(row[0], n.neuron);
    assert.equal(row[1], pct(n[r.headline].mean));
    assert.equal(row[3], (Math.abs(n.p_value - 1 / 5) < 1e-12 ? '≤ ' : '') + coreP(n.p_value));
    assert.equal(row[4], coreP(n.q_value));
    assert.equal(row[5], n.discovery ? 'yes' : 'no');
  });
  const shown = await page.$$eval('#views .view ul.warnings li', (lis) => lis.map((li) => li.textContent));
  assert.ok(shown.some((w) => /winner's curse/.test(w)), 'the winner\'s curse is cautioned');
  // Without the shuffle test the record no longer matches.
  await tick(page, 'neuron-shuffles', false);
  await page.waitForFunction(() => /Shuffles \(4 → 0\)/.test(document.querySelector('#views .stale').textContent));
  assert.deepEqual(b.errors, []);
  await b.context.close();
});
