// Make dist/popdecode.html: the page in one file that works from file:// with no network at all.
// From file:// browsers refuse module workers and fetch/import of file URLs, so: the wasm is inlined as base64 and
// compiled on the main thread; workers are classic workers made from a Blob holding the no-modules glue followed by
// worker.js; the compiled WebAssembly.Module is posted to them. The Content-Security-Policy allows exactly the
// inline scripts and style of this file (by SHA-256) and forbids every connection (connect-src 'none').
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';

const read = (p) => readFileSync(new URL(`../${p}`, import.meta.url), 'utf8');
const hash = (text) => `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;
const guard = (name, text) => {
  if (/<\/script/i.test(text) || /<!--/.test(text)) throw new Error(`${name} contains text that would end an inline script`);
  return text;
};

const html = read('www/index.html');
const glue = guard('glue', read('www/pkg/popdecode.js'));
// The page's scripts, in the order index.html loads them (after the glue).
const sources = [...html.matchAll(/<script src="(js\/[^"]+)"><\/script>/g)].map((m) => m[1]);
if (!sources.length) throw new Error('index.html lists no scripts under js/');
const app = sources.map((p) => guard(p, read(`www/${p}`))).join('\n');
const worker = guard('worker.js', read('www/worker.js'));
const css = read('www/style.css');
const wasm = readFileSync(new URL('../www/pkg/popdecode_bg.wasm', import.meta.url)).toString('base64');
// The examples: each kind's, the analyses' (choices, running) and the example study's table with the trial tables it
// lists (www/js/data.js, PD.loadExample and PD.loadStudyExample).
const study = read('samples/study/study.csv').trim().split('\n').slice(1).map((row) => `study/${row.split(',')[0]}`);
const examples = Object.fromEntries(['odours.csv', 'odours_binned.csv', 'odour_spikes.csv', 'odour_trials.csv',
  'choices.csv', 'running.csv', 'study/study.csv', ...study].map((name) => [name, read(`samples/${name}`)]));

const boot = `window.POPDECODE_OFFLINE = true;\nwindow.POPDECODE_WASM_BASE64 = "${wasm}";\n` +
  `window.POPDECODE_EXAMPLES = ${JSON.stringify(examples).replace(/</g, '\\u003c')};\n`;
const scripts = [boot, glue, app];
const csp = [
  "default-src 'none'",
  `script-src ${scripts.map(hash).join(' ')} 'wasm-unsafe-eval'`,
  'worker-src blob:',
  "connect-src 'none'",
  'img-src blob: data:',
  `style-src ${hash(css)}`,
  "base-uri 'none'",
  "form-action 'none'",
].join('; ');

const marker = (name) => new RegExp(`<!--${name}-->.*\\n?`, 'g');
let out = html
  .replace(marker('CSP'), `<meta http-equiv="Content-Security-Policy" content="${csp}">\n`)
  .replace('<link rel="stylesheet" href="style.css">', `<style>${css}</style>`);
const scriptStart = out.indexOf('<!--SCRIPTS-->');
const scriptEnd = out.indexOf('</body>');
if (scriptStart < 0 || scriptEnd < 0) throw new Error('index.html lost its SCRIPTS marker');
out = out.slice(0, scriptStart) +
  scripts.map((s) => `<script>${s}</script>\n`).join('') +
  `<script type="text/plain" id="glue-src">${glue}</script>\n` +
  `<script type="text/plain" id="worker-src">${worker}</script>\n` +
  out.slice(scriptEnd);
mkdirSync(new URL('../dist/', import.meta.url), { recursive: true });
writeFileSync(new URL('../dist/popdecode.html', import.meta.url), out);
console.log(`dist/popdecode.html: ${out.length} bytes`);
