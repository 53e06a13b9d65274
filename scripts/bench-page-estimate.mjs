// Benchmark (prints figures, asserts nothing): the page's duration estimate against the run it announced, from the
// click to the results, for a few settings on the example and on a larger table. Usage: node
// scripts/bench-page-estimate.mjs [TABLE.csv] (scripts/bench-page-estimate.sh writes a 1000 × 400 table with
// popdecode-bench and builds the page). WORKERS=1 or 2 (default 2) sets the page's pool.
import { serve, browser, closeAll, quickSettings, whenReady } from '../tests/browser/helpers.mjs';

const [table] = process.argv.slice(2);
const server = await serve();
const { page } = await browser();

// One run: settings, then wait for the estimate of exactly these settings, then press Start and time to the record.
async function measure(what, repeats, shuffles) {
  await quickSettings(page, { repeats, shuffles });
  await whenReady(page);
  await page.waitForFunction(() => /on this computer\./.test(document.getElementById('estimate').textContent), null, { timeout: 600_000 });
  const estimate = await page.textContent('#estimate');
  const before = await page.locator('#records li').count();
  const t0 = Date.now();
  await page.click('#start');
  await page.waitForFunction((n) => document.querySelectorAll('#records li').length > n || !document.getElementById('confirm').hidden, before, { timeout: 600_000 });
  if (await page.isVisible('#confirm')) await page.click('#confirm-yes');
  await page.waitForFunction((n) => document.querySelectorAll('#records li').length > n, before, { timeout: 1_800_000 });
  console.log(`${what}, ${repeats} repeats, ${shuffles} shuffles: estimate "${estimate}" | took ${((Date.now() - t0) / 1000).toFixed(1)} s`);
}

async function open(file, decoder) {
  await page.goto(`${server.origin}/index.html?workers=${process.env.WORKERS || 2}`);
  await page.waitForFunction(() => document.body.dataset.ready === 'true');
  if (file) await page.setInputFiles('#file', file);
  else await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  if (decoder) await page.selectOption('#classifier', decoder);
}

// A fresh page for each case, so that no case reuses another's timing.
for (const [repeats, shuffles] of [[100, 100], [10, 2000]]) {
  await open(null, null);
  await measure('example, default decoder', repeats, shuffles);
}
if (table) {
  for (const [repeats, shuffles] of [[10, 0], [4, 2]]) {
    await open(table, 'linear-svm');
    await measure(`${table.split('/').pop()}, linear SVM`, repeats, shuffles);
  }
}
await closeAll();
await server.close();
