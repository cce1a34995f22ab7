// FTLE in the browser, measured in headless Chromium (Debian's /usr/bin/chromium):
//   1. time from opening the page to the first FTLE map with the data's defaults (demo wake);
//   2. FTLE throughput (tracers per second) with 1, 2 and 4 workers (?workers=N) on a
//      larger tracer grid, median of REPEAT runs;
//   3. the native CLI on the same settings, for reference.
// Prints a Markdown table for BENCHMARKS.md.
//
//   node tests/bench/browser_ftle.mjs            (needs www/pkg and the CLI; run from anywhere)
//   SILLAGE_BIN=… REPEAT=5 GRID=200x80 node tests/bench/browser_ftle.mjs
import { execFileSync } from 'node:child_process';
import { createRequire } from 'node:module';
import { cpus } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const require = createRequire(join(ROOT, 'tests', 'browser', 'package.json'));
const { chromium } = require('playwright-core');
const { startPageServer } = await import(join(ROOT, 'tests', 'browser', 'lib', 'server.mjs'));

const REPEAT = Number(process.env.REPEAT ?? 3);
const GRID = (process.env.GRID ?? '200x80').split('x').map(Number);
const WORKERS = [1, 2, 4];
const CLI = process.env.SILLAGE_BIN
  ?? join(process.env.CARGO_TARGET_DIR ?? join(ROOT, 'target'), 'release', 'sillage');
const DEMO = join(ROOT, 'demo-fields', 'fin-wake.npz');

const median = (v) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];

const server = await startPageServer(ROOT, ['--demo-dir', join(ROOT, 'demo-fields')]);
const browser = await chromium.launch({
  executablePath: '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking',
    '--disable-component-update', '--disable-sync', '--no-first-run'],
});

async function openPage(workers) {
  const page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
  const start = Date.now();
  await page.goto(`${server.url}?workers=${workers}`);
  await page.waitForFunction(() => !document.getElementById('compute-ftle').disabled, null, { timeout: 60000 });
  return { page, start };
}

async function compute(page) {
  await page.click('#compute-ftle');
  await page.waitForFunction(() => document.body.dataset.run === 'running' || document.body.dataset.run === 'done');
  await page.waitForFunction(() => ['done', 'failed', 'cancelled'].includes(document.body.dataset.run),
    null, { timeout: 600000 });
  const state = await page.evaluate(() => document.body.dataset.run);
  if (state !== 'done') throw new Error(`run ended '${state}': ${await page.locator('#message').textContent()}`);
  // The map is drawn in the next animation frame.
  await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
  return page.evaluate(() => window.sillagePage.transport().seconds);
}

const rows = [];
try {
  // 1. Page opened → first FTLE map, default settings, as many workers as cores.
  const firstMap = [];
  const ready = [];
  let defaults = null;
  for (let r = 0; r < REPEAT; r += 1) {
    const { page, start } = await openPage(0);
    ready.push((Date.now() - start) / 1000);
    defaults ??= await page.evaluate(() => ({
      t0: document.getElementById('tr-t0').value,
      horizon: document.getElementById('tr-horizon').value,
      step: document.getElementById('tr-step').value,
      grid: `${document.getElementById('tr-nx').value}x${document.getElementById('tr-ny').value}`,
      workers: window.sillagePage.workers,
    }));
    await page.evaluate(() => { document.body.dataset.run = ''; });
    await compute(page);
    firstMap.push((Date.now() - start) / 1000);
    await page.close();
  }
  console.log(`defaults: t0 ${defaults.t0} s, horizon ${defaults.horizon} s, step ${defaults.step} s, grid ${defaults.grid}, ${defaults.workers} workers`);
  console.log(`| page opened → panel ready (demo read, defaults) | ${median(ready).toFixed(2)} s |`);
  console.log(`| page opened → first FTLE map (${defaults.grid}, default settings) | ${median(firstMap).toFixed(2)} s |`);

  // 2. Throughput on a larger grid.
  const tracers = GRID[0] * GRID[1];
  for (const workers of WORKERS) {
    const { page } = await openPage(workers);
    await page.fill('#tr-nx', String(GRID[0]));
    await page.fill('#tr-ny', String(GRID[1]));
    const times = [];
    for (let r = 0; r < REPEAT; r += 1) {
      await page.evaluate(() => { document.body.dataset.run = ''; });
      times.push(await compute(page));
    }
    const t = median(times);
    rows.push({ what: `browser, ${workers} worker${workers > 1 ? 's' : ''}`, t, rate: tracers / t });
    await page.close();
  }

  // 3. The native CLI on the same settings (rayon, 2 threads).
  const cliTimes = [];
  for (let r = 0; r < REPEAT; r += 1) {
    const out = execFileSync(CLI, ['ftle', DEMO, '--t0', defaults.t0, '--horizon', defaults.horizon,
      '--step', defaults.step, '--grid', `${GRID[0]}x${GRID[1]}`, '--out', '/tmp/sillage-bench-ftle.npz']).toString();
    const m = out.match(/evaluations in ([\d.]+) s/);
    if (m) cliTimes.push(Number(m[1]));
  }
  if (cliTimes.length) rows.push({ what: 'native CLI, 2 threads', t: median(cliTimes), rate: tracers / median(cliTimes) });

  console.log(`\nFTLE ${GRID[0]}×${GRID[1]} tracers (${tracers}), t0 ${defaults.t0} s, horizon ${defaults.horizon} s, RK4 step ${defaults.step} s, variational ∇F; median of ${REPEAT}`);
  console.log('| run | seconds | tracers / s |');
  console.log('|---|---|---|');
  for (const r of rows) console.log(`| ${r.what} | ${r.t.toFixed(2)} | ${Math.round(r.rate).toLocaleString('en')} |`);
  console.log(`\nmachine: ${cpus()[0]?.model ?? 'unknown'}, ${cpus().length} cores; date ${new Date().toISOString().slice(0, 10)}`);
} finally {
  await browser.close();
  await server.close();
}
