// A large trial table (a generated CSV of about 30 MB: 3000 trials × 1500 neurons of rates with three decimals):
// the page's main thread never blocks for a second or more at a time while loading, checking and running (long
// tasks seen by a PerformanceObserver installed before the page's scripts), and the browser's memory (the resident
// set of every Chromium process, summed, from /proc, as scripts/bench-nwb-memory.mjs measures it) stays bounded.
// Measured: the main thread's longest task is well under 100 ms; memory grows by about 12.6 times the file (one
// worker). The goal of issue 12 is under 3 times: what remains is the data worker's parse, which holds every cell
// as a string (input/table.rs `Table`), about 28 bytes per 7-byte cell in wasm32, while it builds the matrix; a
// streaming trial-table reader in input/ removes it. Until then this test guards the measured level (the page
// before the data worker grew by about 50 times the file, issue 12).
import { test, after, before } from 'node:test';
import assert from 'node:assert/strict';
import { readdirSync, readFileSync, writeFileSync, mkdtempSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { serve, browser, closeAll, quickSettings } from './helpers.mjs';

let server;
before(async () => { server = await serve(); });
after(async () => { await closeAll(); await server.close(); });

const TRIALS = 3000;
const NEURONS = 1500;
const file = join(mkdtempSync(join(tmpdir(), 'popdecode-big-')), 'big.csv');
{
  // Deterministic invented rates: four odours, each shifting a few neurons.
  const lines = ['odour,' + Array.from({ length: NEURONS }, (_, j) => `n${j}`).join(',')];
  let s = 1;
  const rand = () => { s = (s * 1103515245 + 12345) % 2147483648; return s / 2147483648; };
  for (let i = 0; i < TRIALS; i++) {
    const c = i % 4;
    const row = new Array(NEURONS);
    for (let j = 0; j < NEURONS; j++) row[j] = (10 + (j % 4 === c ? 3 : 0) + 4 * rand()).toFixed(3);
    lines.push(`o${c},${row.join(',')}`);
  }
  writeFileSync(file, lines.join('\n') + '\n');
}
const SIZE = statSync(file).size;

function browserRss(profile) {
  let kb = 0;
  for (const pid of readdirSync('/proc').filter((p) => /^\d+$/.test(p))) {
    try {
      if (!readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes(profile)) continue;
      const m = /VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
      if (m) kb += Number(m[1]);
    } catch (_) { /* the process ended meanwhile */ }
  }
  return kb * 1024;
}

for (const workers of [1, 2]) {
  test(`a ${Math.round(SIZE / 1e6)} MB CSV with ${workers} worker(s): no long block of the page, memory bounded`, async () => {
    const b = await browser();
    const { page } = b;
    await page.addInitScript(() => {
      window.__long = [];
      new PerformanceObserver((list) => list.getEntries().forEach((e) => window.__long.push(e.duration)))
        .observe({ type: 'longtask', buffered: true });
    });
    await page.goto(`${server.origin}/index.html?workers=${workers}`);
    await page.waitForFunction(() => document.body.dataset.ready === 'true');
    await new Promise((ok) => setTimeout(ok, 500));
    const idle = browserRss(b.profile);
    let peak = idle;
    const timer = setInterval(() => { peak = Math.max(peak, browserRss(b.profile)); }, 25);
    await page.evaluate(() => { window.__long = []; });
    await page.setInputFiles('#file', file);
    await page.waitForSelector('#data-view:not([hidden])', { timeout: 120_000 });
    await page.selectOption('#classifier', 'nearest-mean');
    await quickSettings(page, { repeats: 1, shuffles: 0 });
    await page.fill('#folds', '2');
    await page.dispatchEvent('#folds', 'change');
    await page.waitForFunction(() => !document.getElementById('start').disabled, null, { timeout: 240_000 });
    assert.match(await page.textContent('#file-summaries'), new RegExp(`big\\.csv: ${TRIALS.toLocaleString('en')} rows × ${(NEURONS + 1).toLocaleString('en')} columns`));
    assert.ok(await page.locator('#previews td').count() <= 8 * 40, 'the preview is bounded');
    await page.click('#start');
    if (await page.isVisible('#confirm')) await page.click('#confirm-yes');
    await page.waitForFunction(() => document.querySelectorAll('#records li').length === 1, null, { timeout: 240_000 });
    clearInterval(timer);
    peak = Math.max(peak, browserRss(b.profile));
    const long = await page.evaluate(() => window.__long);
    const grew = peak - idle;
    console.log(`# ${workers} worker(s): file ${(SIZE / 1e6).toFixed(1)} MB, memory grew ${(grew / 1e6).toFixed(0)} MB ` +
      `(${(grew / SIZE).toFixed(2)} × the file), longest main-thread task ${Math.round(Math.max(0, ...long))} ms`);
    assert.match(await page.textContent('#views .headline'), /'odour' decoded at/);
    assert.ok(Math.max(0, ...long) < 1000, `the main thread blocked for ${Math.max(...long)} ms`);
    assert.ok(grew < 15 * SIZE, `memory grew by ${(grew / 1e6).toFixed(0)} MB for a ${(SIZE / 1e6).toFixed(0)} MB file`);
    assert.deepEqual(b.errors, []);
    await b.context.close();
  });
}
