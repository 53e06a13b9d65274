// Benchmark (prints figures, asserts nothing): peak memory while the page and the CLI read a large NWB file.
// Usage: node scripts/bench-nwb-memory.mjs FILE.nwb   (scripts/bench-nwb-memory.sh makes the file and builds).
// The browser's memory is the resident set (VmRSS) of all of its processes summed, sampled every 20 ms from /proc;
// the CLI's is its peak resident set (GNU time's %M).
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { serve, browser, closeAll, quickSettings, runAndWait, ROOT } from '../tests/browser/helpers.mjs';

const file = process.argv[2];
const size = statSync(file).size;
const mb = (bytes) => (bytes / 1e6).toFixed(0).padStart(5) + ' MB';

function browserRss(profile) {
  let total = 0;
  for (const pid of readdirSync('/proc').filter((p) => /^\d+$/.test(p))) {
    try {
      if (!readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes(profile)) continue;
      const kb = /VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
      if (kb) total += Number(kb[1]) * 1024;
    } catch (_) { /* the process ended meanwhile */ }
  }
  return total;
}

// Peak of the summed resident set while `work` runs.
async function peakDuring(profile, work) {
  let peak = browserRss(profile);
  const timer = setInterval(() => { peak = Math.max(peak, browserRss(profile)); }, 20);
  try { await work(); } finally { clearInterval(timer); }
  return Math.max(peak, browserRss(profile));
}

const server = await serve();
try {
  const b = await browser();
  await b.page.goto(`${server.origin}/index.html?workers=2`);
  await b.page.waitForFunction(() => document.getElementById('version').textContent.length > 0);
  await b.page.check('input[name=kind][value=nwb]');
  await new Promise((ok) => setTimeout(ok, 500));
  const idle = browserRss(b.profile);
  const t0 = performance.now();
  const loading = await peakDuring(b.profile, async () => {
    await b.page.setInputFiles('#nwb-file', file);
    await b.page.waitForFunction(() => /NWB, \d+ units/.test(document.getElementById('file-summary').textContent),
      null, { timeout: 600_000 });
  });
  const seconds = (performance.now() - t0) / 1000;
  const summary = await b.page.textContent('#file-summary');
  await quickSettings(b.page, { repeats: 3, shuffles: 9 });
  const running = await peakDuring(b.profile, () => runAndWait(b.page));
  // For comparison: the same file read whole into the page, as a reader without random access would need.
  const whole = await peakDuring(b.profile, async () => {
    await b.page.evaluate(() => { const i = document.createElement('input'); i.type = 'file'; i.id = 'whole'; document.body.append(i); });
    await b.page.setInputFiles('#whole', file);
    await b.page.evaluate(async () => { window.wholeFile = await document.getElementById('whole').files[0].arrayBuffer(); });
  });
  console.log(`NWB file: ${mb(size)} (${summary.replace(/^.*?: /, '')})`);
  console.log(`page, every process of the browser summed (2 decoding workers):`);
  console.log(`  idle on the NWB form          ${mb(idle)}`);
  console.log(`  peak while reading the file   ${mb(loading)}  (+${mb(loading - idle).trim()} over idle; ${seconds.toFixed(1)} s)`);
  console.log(`  peak while decoding           ${mb(running)}  (+${mb(running - idle).trim()} over idle)`);
  console.log(`  the file read whole, for scale ${mb(whole)}  (+${mb(whole - idle).trim()} over idle)`);
  await b.context.close();
} finally {
  await closeAll();
  await server.close();
}

const bin = join(ROOT, 'target', 'release', 'popdecode');
// GNU time prints the peak resident set (KiB) on stderr: keep that line, drop the program's own output.
const cliPeak = (args) => 1024 * Number(execFileSync('sh', ['-c', '/usr/bin/time -f %M "$0" "$@" 2>&1 >/dev/null | tail -n 1', bin, ...args],
  { encoding: 'utf8' }).trim());
console.log('command line (peak resident set):');
console.log(`  popdecode inspect             ${mb(cliPeak(['inspect', file]))}`);
console.log(`  popdecode timecourse --nwb    ${mb(cliPeak(['timecourse', '--nwb', file, '--label', 'odour', '--start', '-0.5', '--end', '1',
  '--width', '0.2', '--step', '0.1', '--repeats', '3', '--shuffles', '9', '--quiet']))}`);
