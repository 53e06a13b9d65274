// Benchmark (prints figures, asserts nothing): each decoder on the standard protocol in the page with one worker,
// from the click to the first frame drawn with the results (timed inside the page), against the native CLI on one
// thread. Each side runs ROUNDS times (default 3) and the median is printed. Each round starts
// once the page shows its estimate (the settings checked and one task timed for them, as a user sees before
// pressing Start), so the first round does not also time the task. Usage: node scripts/bench-page-decoders.mjs
// TABLE.csv (scripts/bench-page-decoders.sh writes the table with popdecode-bench and builds the page and the CLI).
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { serve, browser, closeAll, ROOT } from '../tests/browser/helpers.mjs';

const [table] = process.argv.slice(2);
const ROUNDS = Number(process.env.ROUNDS || 3);
const DECODERS = process.env.DECODERS ? process.env.DECODERS.split(',') : ['linear-svm', 'shrinkage-lda', 'logistic', 'gaussian-nb', 'poisson-nb', 'nearest-mean', 'rbf-svm'];
const PROTOCOL = { repeats: '100', shuffles: '0', folds: '5' };
const median = (v) => [...v].sort((a, b) => a - b)[Math.floor((v.length - 1) / 2)];
const out = join(mkdtempSync(join(tmpdir(), 'popdecode-bench-')), 'out.json');

function native(decoder) {
  const started = performance.now();
  execFileSync(join(ROOT, 'target/release/popdecode'), ['decode', table, '--label', 'odour', '--classifier', decoder,
    '--repeats', PROTOCOL.repeats, '--shuffles', PROTOCOL.shuffles, '--folds', PROTOCOL.folds, '--threads', '1',
    '--quiet', '--json', out]);
  return (performance.now() - started) / 1000;
}

async function set(page, id, value) {
  await page.fill('#' + id, value);
  await page.dispatchEvent('#' + id, 'change');
}

const server = await serve();
try {
  const b = await browser();
  await b.page.goto(`${server.origin}/index.html?workers=1`);
  await b.page.waitForFunction(() => document.body.dataset.ready === 'true');
  await b.page.setInputFiles('#file', table);
  await b.page.waitForFunction(() => !document.getElementById('start').disabled, null, { timeout: 600_000 });
  await b.page.selectOption('#label', 'odour');
  await b.page.dispatchEvent('#label', 'change');
  for (const [id, v] of Object.entries(PROTOCOL)) await set(b.page, id, v);
  const rows = [];
  for (const decoder of DECODERS) {
    await b.page.selectOption('#classifier', decoder);
    await b.page.dispatchEvent('#classifier', 'change');
    const page = [];
    for (let r = 0; r < ROUNDS; r++) {
      await b.page.waitForFunction(() => !document.getElementById('start').disabled, null, { timeout: 600_000 });
      // The check runs 150 ms after a change; then its timing, if any.
      await new Promise((ok) => setTimeout(ok, 400));
      await b.page.waitForFunction(() => !window.PD.timingNow() && /on this computer\./.test(document.getElementById('estimate').textContent), null, { timeout: 600_000 });
      // Timed in the page itself, from the click to the first frame drawn after the new record is in the list
      // (a MutationObserver sees it at once): timing from here would add the driver's messages and its polling,
      // tens of milliseconds that are not the page's. Clicked in the page too: Playwright's own click first waits
      // for the button to stop moving, which it does while the page scrolls smoothly to the previous results.
      const before = await b.page.locator('#records li').count();
      await b.page.evaluate((n) => {
        window.benchDone = new Promise((resolve) => {
          const records = document.getElementById('records');
          const seen = new MutationObserver(() => {
            if (records.querySelectorAll('li').length <= n) return;
            seen.disconnect();
            requestAnimationFrame(() => resolve(performance.now()));
          });
          seen.observe(records, { childList: true, subtree: true });
        });
        window.benchStarted = performance.now();
        document.getElementById('start').click();
      }, before);
      await b.page.waitForFunction((n) => document.querySelectorAll('#records li').length > n || !document.getElementById('confirm').hidden,
        before, { timeout: 1_800_000 });
      if (await b.page.isVisible('#confirm')) await b.page.click('#confirm-yes');
      page.push(await b.page.evaluate(async () => (await window.benchDone - window.benchStarted) / 1000));
    }
    const cli = Array.from({ length: ROUNDS }, () => native(decoder));
    if (process.env.VERBOSE) console.log(decoder, page.map((s) => s.toFixed(3)).join(' '), cli.map((s) => s.toFixed(3)).join(' '));
    const [p, c] = [median(page), median(cli)];
    const ok = p <= 2 * c || p < 0.15;
    rows.push(`  ${decoder.padEnd(14)} page ${p.toFixed(3).padStart(7)} s   CLI ${c.toFixed(3).padStart(7)} s   ratio ${(p / c).toFixed(2).padStart(5)}   ${ok ? 'within 2x or under 0.15 s' : 'SLOWER than 2x the CLI'}`);
    console.log(rows[rows.length - 1]);
  }
  console.log(`standard protocol (232 trials x 52 units, 4 classes, ${PROTOCOL.repeats} repeats x ${PROTOCOL.folds} folds, no shuffles); ` +
    `page: one worker, click to results; CLI: one thread, whole run; median of ${ROUNDS}`);
  await b.context.close();
} finally {
  await closeAll();
  await server.close();
}
