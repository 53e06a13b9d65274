// The offline file in Firefox ESR (Debian's firefox-esr, driven over WebDriver BiDi by puppeteer-core 25.16.0; no
// browser is downloaded): the main flows give the command line's bytes with no console error. Locked-down lab
// machines often have only Firefox ESR.
import { test, after } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import puppeteer from 'puppeteer-core';
import { cli, ROOT, OUT } from './helpers.mjs';

const FIREFOX = '/usr/bin/firefox-esr';
const tmp = mkdtempSync(join(tmpdir(), 'popdecode-firefox-'));
let firefox = null;
after(async () => { if (firefox) await firefox.close(); });

async function open() {
  firefox = firefox || await puppeteer.launch({ browser: 'firefox', executablePath: FIREFOX, headless: true, protocol: 'webDriverBiDi' });
  const page = await firefox.newPage();
  const problems = [];
  page.on('console', (m) => { if (m.type() === 'error') problems.push('console: ' + m.text()); });
  page.on('pageerror', (e) => problems.push('page: ' + e.message));
  await page.setViewport({ width: 1366, height: 900 });
  await page.goto('file://' + join(ROOT, 'dist', 'popdecode.html'));
  await page.waitForFunction(() => document.body.dataset.ready === 'true', { timeout: 300_000 });
  return { page, problems };
}

const set = (page, id, value) => page.evaluate((i, v) => {
  const e = document.getElementById(i); e.value = v; e.dispatchEvent(new Event('change'));
}, id, String(value));

async function run(page, button = '#start') {
  await page.waitForFunction((b) => !document.querySelector(b).disabled, { timeout: 300_000 }, button);
  const before = await page.evaluate(() => window.PD.state.records.length);
  await page.click(button);
  await page.waitForFunction((n) => window.PD.state.records.length > n, { timeout: 300_000 }, before);
  return page.evaluate(() => { const r = window.PD.state.records.at(-1); return { json: r.result.report_json, recipe: r.recipe, headline: r.result.headline }; });
}

test('Firefox ESR: the offline file decodes a trial table and a time course with the command line\'s bytes', { skip: !existsSync(FIREFOX) && 'firefox-esr is not installed' }, async () => {
  const { page, problems } = await open();
  await page.click('#example');
  await page.waitForSelector('#data-view:not([hidden])');
  await set(page, 'repeats', 4);
  await set(page, 'shuffles', 6);
  const table = await run(page);
  const recipeFile = join(tmp, 'table.recipe.json');
  writeFileSync(recipeFile, JSON.stringify(table.recipe));
  const out = join(tmp, 'table.json');
  const stdout = cli(['decode', join(ROOT, 'samples', 'odours.csv'), '--recipe', recipeFile, '--quiet', '--json', out]);
  assert.equal(table.json + '\n', readFileSync(out, 'utf8'), 'Firefox JSON and CLI JSON differ');
  assert.equal(table.headline.trim(), stdout.split('\n')[0].trim());
  await page.screenshot({ path: join(OUT, 'firefox-table.png'), fullPage: true });

  await page.click('input[name=kind][value=events]');
  await page.click('#example-events');
  await page.waitForFunction(() => /Trials per class/.test(document.getElementById('classes').textContent), { timeout: 300_000 });
  await set(page, 'repeats', 3);
  await set(page, 'shuffles', 9);
  await set(page, 'width', 0.2);
  await set(page, 'step', 0.1);
  const time = await run(page);
  const timeRecipe = join(tmp, 'time.recipe.json');
  writeFileSync(timeRecipe, JSON.stringify(time.recipe));
  const timeOut = join(tmp, 'time.json');
  cli(['timecourse', '--events', join(ROOT, 'samples', 'odour_spikes.csv'), '--trials', join(ROOT, 'samples', 'odour_trials.csv'),
    '--recipe', timeRecipe, '--quiet', '--json', timeOut]);
  assert.equal(time.json + '\n', readFileSync(timeOut, 'utf8'), 'Firefox JSON and CLI JSON differ (time course)');
  await page.screenshot({ path: join(OUT, 'firefox-timecourse.png'), fullPage: true });
  assert.deepEqual(problems, []);
  await page.close();
});
