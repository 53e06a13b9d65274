// Shared set-up for the browser tests: a static server for www/ on 127.0.0.1 (cross-origin isolated), Debian's chromium driven by
// playwright-core, a record of every request (page and workers), and screenshots under test-output/browser/.
import { createServer } from 'node:http';
import { mkdirSync, readFileSync, existsSync, mkdtempSync } from 'node:fs';
import { extname, join, normalize } from 'node:path';
import { tmpdir } from 'node:os';
import { execFileSync } from 'node:child_process';
import { chromium } from 'playwright-core';

export const ROOT = new URL('../../', import.meta.url).pathname;
export const OUT = join(ROOT, 'test-output', 'browser');
mkdirSync(OUT, { recursive: true });

const TYPES = { '.html': 'text/html', '.js': 'text/javascript', '.css': 'text/css', '.wasm': 'application/wasm', '.csv': 'text/csv', '.json': 'application/json' };

/// `isolated: false` serves without the two headers, as a plain static host would: the page then gives each
/// worker its own copy of the data.
export async function serve({ isolated = true } = {}) {
  const www = join(ROOT, 'www');
  const hits = [];
  const server = createServer((req, res) => {
    hits.push(req.url);
    const path = normalize(decodeURIComponent(new URL(req.url, 'http://x').pathname)).replace(/^(\.\.[/\\])+/, '');
    const file = join(www, path.endsWith('/') ? path + 'index.html' : path);
    if (!file.startsWith(www) || !existsSync(file)) { res.writeHead(404); res.end(); return; }
    // Cross-origin isolated, as scripts/serve.py serves it: the page's workers share one memory.
    res.writeHead(200, {
      'content-type': TYPES[extname(file)] || 'application/octet-stream',
      ...(isolated ? { 'cross-origin-opener-policy': 'same-origin', 'cross-origin-embedder-policy': 'require-corp' } : {}),
    });
    res.end(readFileSync(file));
  });
  await new Promise((ok) => server.listen(0, '127.0.0.1', ok));
  const origin = `http://127.0.0.1:${server.address().port}`;
  return { origin, hits, close: () => new Promise((ok) => { server.closeAllConnections(); server.close(ok); }) };
}

const open = [];
/// Close every browser still open (a failed test leaves its own open; this keeps the run from hanging).
export async function closeAll() {
  await Promise.all(open.splice(0).map((c) => c.close().catch(() => {})));
}

/// Per-test time limit for tests that run several analyses (node's --test-timeout is the default for the others).
export const SLOW = { timeout: 1_800_000 };

export async function browser() {
  const profile = mkdtempSync(join(tmpdir(), 'popdecode-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: '/usr/bin/chromium',
    headless: true,
    acceptDownloads: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  open.push(context);
  // The machine is shared with other builds: every wait is generous, because what the tests measure is never time.
  context.setDefaultTimeout(300_000);
  const requests = [];
  context.on('request', (r) => requests.push(r.url()));
  const page = context.pages()[0] || await context.newPage();
  page.on('worker', (w) => requests.push('worker:' + w.url()));
  const errors = [];
  page.on('pageerror', (e) => errors.push(String(e)));
  page.on('dialog', (d) => { errors.push('dialog: ' + d.message()); d.dismiss(); });
  return { context, page, requests, errors, profile };
}

/// Every request must stay on the page's own origin (served) or on file:, blob:, data: (offline).
export function assertLocalOnly(assert, requests, origin) {
  const allowed = (u) => {
    const url = u.startsWith('worker:') ? u.slice(7) : u;
    return (origin && url.startsWith(origin + '/')) || /^(file|blob|data):/.test(url);
  };
  const outside = requests.filter((u) => !allowed(u));
  assert.deepEqual(outside, [], 'requests beyond the page\'s own files');
}

export async function shot(page, name) {
  await page.screenshot({ path: join(OUT, name + '.png'), fullPage: true });
}

/// Small settings so a full run takes seconds.
export async function quickSettings(page, { repeats = 4, shuffles = 6 } = {}) {
  await page.fill('#repeats', String(repeats));
  await page.dispatchEvent('#repeats', 'change');
  await page.fill('#shuffles', String(shuffles));
  await page.dispatchEvent('#shuffles', 'change');
}

/// Wait until the page has checked the current settings against the data and a run can start.
export async function whenReady(page, button = '#start') {
  await page.waitForFunction((b) => !document.querySelector(b).disabled, button, { timeout: 300_000 });
}

/// Press a run button and wait for the new record to be on view; returns its headline.
export async function runAndWait(page, button = '#start') {
  await whenReady(page, button);
  const before = await page.locator('#records li').count();
  await page.click(button);
  // A run the page expects to be long asks first: say yes.
  await page.waitForFunction((n) => document.querySelectorAll('#records li').length > n || !document.getElementById('confirm').hidden,
    before, { timeout: 600_000 });
  if (await page.isVisible('#confirm')) await page.click('#confirm-yes');
  await page.waitForFunction((n) => document.querySelectorAll('#records li').length > n, before, { timeout: 600_000 });
  const headline = page.locator('#views .view .headline');
  return (await headline.count()) ? headline.first().textContent() : '';
}

// The export buttons of the record on view, by their accessible names.
const EXPORTS = {
  '#export-json': /Save the (neuron )?results of run \d+ as JSON/,
  '#export-recipe': /Save the recipe of run \d+/,
  '#export-csv': /Save the scores of run \d+ as CSV/,
  '#export-curve': /Save the decoding curve of run \d+/,
  '#export-matrix': /Save the temporal generalization matrix of run \d+/,
  '#export-neurons': /Save the neuron results of run \d+ as JSON/,
};
export function target(page, selector) {
  return EXPORTS[selector] ? page.locator('#views .view').first().getByRole('button', { name: EXPORTS[selector] }) : page.locator(selector).first();
}

/// Click an export (an old-style id from EXPORTS, or any selector) and return the saved text.
export async function downloadText(page, selector) {
  return (await download(page, selector)).text;
}
export async function download(page, selector) {
  const [dl] = await Promise.all([page.waitForEvent('download'), target(page, selector).click()]);
  const path = await dl.path();
  return { text: readFileSync(path, 'utf8'), name: dl.suggestedFilename(), path };
}

export function cli(args) {
  return execFileSync(join(ROOT, 'target', 'release', 'popdecode'), args, { encoding: 'utf8' });
}
