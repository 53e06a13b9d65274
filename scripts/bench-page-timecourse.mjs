// Benchmark (prints figures, asserts nothing): the time-course target case in the page, every worker of a 2-core
// machine. Usage: node scripts/bench-page-timecourse.mjs TABLE.csv DECODER [REPEATS SHUFFLES]
// (scripts/bench-page-timecourse.sh writes the table with popdecode-bench and builds the page).
import { serve, browser, closeAll } from '../tests/browser/helpers.mjs';

const [table, decoder, repeats = '10', shuffles = '200'] = process.argv.slice(2);
const server = await serve();
try {
  const b = await browser();
  await b.page.goto(`${server.origin}/index.html?workers=2`);
  await b.page.waitForFunction(() => document.getElementById('version').textContent.length > 0);
  await b.page.check('input[name=kind][value=binned]');
  const loaded = performance.now();
  await b.page.setInputFiles('#file', table);
  await b.page.waitForFunction(() => !document.getElementById('start').disabled, null, { timeout: 600_000 });
  const loadSeconds = (performance.now() - loaded) / 1000;
  await b.page.selectOption('#classifier', decoder);
  for (const [id, v] of [['repeats', repeats], ['shuffles', shuffles], ['shuffle-repeats', '']]) {
    await b.page.fill('#' + id, v);
    await b.page.dispatchEvent('#' + id, 'change');
  }
  await b.page.waitForFunction(() => !document.getElementById('start').disabled, null, { timeout: 600_000 });
  const started = performance.now();
  await b.page.click('#start');
  await b.page.waitForSelector('#results:not([hidden])', { timeout: 1_800_000 });
  const seconds = (performance.now() - started) / 1000;
  console.log(`page, 2 workers, ${decoder}: table read and checked in ${loadSeconds.toFixed(1)} s; ` +
    `run ${seconds.toFixed(1)} s from the click to the results (${await b.page.textContent('#progress-text')})`);
  await b.context.close();
} finally {
  await closeAll();
  await server.close();
}
