// FTLE in the page: the transport panel filled from the data, the worker pool computing a
// run with progress, the numbers equal to the command-line tool's on the same settings, the
// views (exit time, ridges, zoom, pan, probe, arrows), cancelling a large run, a panic in a
// worker turned into a message, and no request to any other host (recording proxy).
//
// Needs www/pkg (bash www/build.sh) and the CLI: $SILLAGE_BIN, else target/release/sillage
// (CARGO_TARGET_DIR is honoured). Screenshots go to tests/artifacts/ (git-ignored).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium } from 'playwright-core';
import { npzArrays } from './lib/npz.mjs';
import { startRecordingProxy } from './lib/proxy.mjs';
import { startPageServer } from './lib/server.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const ARTIFACTS = join(ROOT, 'tests', 'artifacts');
const DEMO = join(ROOT, 'demo-fields', 'fin-wake.npz');
const TARGET = process.env.CARGO_TARGET_DIR ?? join(ROOT, 'target');
const CLI = process.env.SILLAGE_BIN ?? join(TARGET, 'release', 'sillage');

// Same exclusions and flags as page.test.mjs (see there and DESIGN.md, "Known pitfalls").
// This file runs longer than page.test.mjs, long enough for Chromium's component updater to
// call its vendor's update service once (a POST to /service/update2, seen here ~20 s after
// start-up despite --disable-component-update): excluded by exact name as well.
const BROWSER_BACKGROUND_HOSTS = new Set(['accounts.google.com', 'update.googleapis.com']);
const DISABLED_FEATURES = [
  'AutofillServerCommunication', 'OptimizationHints', 'NetworkTimeServiceQuerying', 'AimEnabled',
  'Translate', 'MediaRouter', 'DialMediaRouteProvider', 'HttpsUpgrades',
];
/** The deliberate panic of the self-test job logs itself to the console; nothing else may. */
const EXPECTED_CONSOLE = /deliberate panic requested by a self-test/;

let proxy;
let server;
let browser;
let page;
let scratch;
const pageProblems = [];

const runState = () => page.evaluate(() => document.body.dataset.run ?? '');
const transportSummary = () => page.evaluate(() => {
  const t = window.sillagePage.transport();
  return t && { id: t.id, n: t.arrays.ftle.length, grid: [t.grid.nx, t.grid.ny] };
});

/** Hash of the field map's pixels, to tell one drawing from another. */
const mapHash = () => page.evaluate(() => {
  const c = document.getElementById('field-map');
  const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
  let h = 0x811c9dc5;
  for (let i = 0; i < d.length; i += 1) h = Math.imul(h ^ d[i], 0x01000193) >>> 0;
  return `${c.width}x${c.height}:${h}`;
});

async function waitForNewDrawing(previous) {
  const deadline = Date.now() + 10000;
  while (Date.now() < deadline) {
    const h = await mapHash();
    if (h !== previous) return h;
    await page.waitForTimeout(50);
  }
  throw new Error('the field map was not redrawn within 10 s');
}

async function setGrid(nx, ny) {
  await page.getByLabel('Tracers along x').fill(String(nx));
  await page.getByLabel('Tracers along y').fill(String(ny));
}

async function computeAndWait(timeout = 60000) {
  await page.getByRole('button', { name: 'Compute FTLE' }).click();
  await page.waitForFunction(() => document.body.dataset.run === 'running'
    || document.body.dataset.run === 'done', null, { timeout: 5000 });
  await page.waitForFunction(() => ['done', 'failed', 'cancelled'].includes(document.body.dataset.run),
    null, { timeout });
  return runState();
}

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  assert.ok(existsSync(CLI), `the CLI ${CLI} is missing: build it or set SILLAGE_BIN`);
  mkdirSync(ARTIFACTS, { recursive: true });
  scratch = mkdtempSync(join(tmpdir(), 'sillage-ftle-'));
  proxy = await startRecordingProxy();
  server = await startPageServer(ROOT, ['--demo-dir', join(ROOT, 'demo-fields')]);
  browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking',
      '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic',
      `--disable-features=${DISABLED_FEATURES.join(',')}`,
      `--proxy-server=http://127.0.0.1:${proxy.port}`,
    ],
  });
  page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
  page.on('pageerror', (e) => pageProblems.push(`page error: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error' && !EXPECTED_CONSOLE.test(m.text())) pageProblems.push(`console error: ${m.text()}`);
  });
  await page.goto(server.url);
  await page.locator('#summary dd[data-key="grid"]').waitFor({ timeout: 20000 });
});

after(async () => {
  await browser?.close();
  await server?.close();
  await proxy?.close();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

test('the transport panel is filled from defaults the core derives from the data', async () => {
  await page.waitForFunction(() => !document.getElementById('compute-ftle').disabled, null, { timeout: 20000 });
  assert.equal(await page.getByLabel('Start time t₀').inputValue(), '0');
  // demo-fields/README.md: shedding at f = 1.8265 Hz, a period of 0.5475 s.
  const horizon = Number(await page.getByLabel('Horizon |T|').inputValue());
  assert.ok(Math.abs(horizon - 0.5475) < 0.02 * 0.5475, `horizon ${horizon}`);
  assert.equal(await page.getByLabel('Tracers along x').inputValue(), '100');
  assert.equal(await page.getByLabel('Tracers along y').inputValue(), '40');
  const step = Number(await page.getByLabel('RK4 step').inputValue());
  // |u|max 0.1051 m/s (sillage inspect), spacing 0.6 mm: 0.5 · 0.0006 / 0.1051 = 0.00285 s.
  assert.ok(step > 0.0025 && step <= 0.00286, `step ${step}`);
  assert.match(await page.locator('#transport-notes').textContent(), /dominant oscillation/);
  // The demo carries spurious vectors on purpose (about 2 %): the noise warning shows.
  await page.locator('#transport-warnings li[data-code="noisy_data"]').waitFor();
});

test('settings the data cannot support are refused with the reason', async () => {
  const horizon = page.getByLabel('Horizon |T|');
  await horizon.fill('10');
  const refusal = page.locator('#transport-warnings li[data-code="horizon_exceeds_record"]');
  await refusal.waitFor();
  assert.match(await refusal.textContent(), /longer than the whole record/);
  assert.equal(await page.getByRole('button', { name: 'Compute FTLE' }).isDisabled(), true);
  await page.getByLabel('Start time t₀').fill('5.5');
  await horizon.fill('1');
  await page.locator('#transport-warnings li[data-code="horizon_exceeds_remaining"]').waitFor();
  await page.getByLabel('Direction').selectOption('backward');
  await page.locator('#transport-warnings li[data-code="horizon_exceeds_remaining"]').waitFor({ state: 'detached' });
  assert.equal(await page.getByRole('button', { name: 'Compute FTLE' }).isDisabled(), false);
  await setGrid(1000, 400);
  await page.locator('#transport-warnings li[data-code="tracers_finer_than_data"]').waitFor();
  assert.match(await page.locator('#transport-warnings').textContent(), /interpolation, not measurement/);
  await page.getByRole('button', { name: 'Use the data\'s defaults' }).click();
  await page.waitForFunction(() => document.getElementById('tr-t0').value === '0'
    && document.getElementById('tr-direction').value === 'forward');
  await page.locator('#transport-warnings li.refuse').waitFor({ state: 'detached' });
});

let firstResult;

test('FTLE computed by the workers equals the command-line tool\'s on the same settings', async (t) => {
  await setGrid(48, 20);
  const t0 = await page.getByLabel('Start time t₀').inputValue();
  const horizon = await page.getByLabel('Horizon |T|').inputValue();
  const step = await page.getByLabel('RK4 step').inputValue();
  const state = await computeAndWait();
  assert.equal(state, 'done', await page.locator('#message').textContent());
  // Progress reached the end; the bar is hidden again.
  assert.equal(await page.locator('#progress-bar').evaluate((b) => b.value), 1);
  assert.equal(await page.locator('#progress').isHidden(), true);
  assert.match(await page.locator('#run-summary').textContent(), /^FTLE on 48 × 20 tracers/);
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /^FTLE σ/);

  const distinct = await page.evaluate(() => {
    const c = document.getElementById('field-map');
    const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
    const seen = new Set();
    for (let i = 0; i < d.length; i += 4) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
    return seen.size;
  });
  assert.ok(distinct > 50, `only ${distinct} distinct colours on the FTLE map`);
  await page.screenshot({ path: join(ARTIFACTS, 'ftle-map.png'), fullPage: true });

  const out = join(scratch, 'ftle.npz');
  execFileSync(CLI, ['ftle', DEMO, '--t0', t0, '--horizon', horizon, '--grid', '48x20',
    '--step', step, '--out', out], { stdio: 'pipe' });
  const cli = npzArrays(out, ['ftle', 'exit_time', 'flag']);
  assert.deepEqual(cli.ftle.shape, [20, 48]);
  const mine = await page.evaluate(() => {
    const t = window.sillagePage.transport();
    return { ftle: Array.from(t.arrays.ftle), tau: Array.from(t.arrays.tau), flag: Array.from(t.arrays.flag) };
  });
  assert.equal(mine.ftle.length, cli.ftle.data.length);
  assert.deepEqual(mine.flag, Array.from(cli.flag.data), 'status flags');
  const scale = Math.max(...cli.ftle.data.map(Math.abs));
  let worst = 0;
  for (let c = 0; c < mine.ftle.length; c += 1) {
    // Relative to the value, with a floor of 1e-3 of the largest (values near zero).
    const err = Math.abs(mine.ftle[c] - cli.ftle.data[c]) / Math.max(Math.abs(cli.ftle.data[c]), 1e-3 * scale);
    worst = Math.max(worst, err);
    assert.ok(Math.abs(mine.tau[c] - cli.exit_time.data[c]) <= 1e-5 * Math.abs(cli.exit_time.data[c]) + 1e-7,
      `exit time at ${c}: ${mine.tau[c]} vs ${cli.exit_time.data[c]}`);
  }
  t.diagnostic(`largest relative FTLE difference page vs CLI: ${worst.toExponential(2)}`);
  assert.ok(worst <= 1e-5, `largest relative FTLE difference ${worst}`);
  firstResult = await transportSummary();
});

test('exit time, ridges, arrows, zoom, pan and the probe', async () => {
  const field = page.getByLabel('Field', { exact: true });
  let h = await mapHash();
  await field.selectOption('exit_time');
  h = await waitForNewDrawing(h);
  assert.match(await page.locator('#colorbar').getAttribute('aria-label'), /^Colour scale of exit time τ \(s\)/);
  await page.screenshot({ path: join(ARTIFACTS, 'ftle-exit-time.png'), fullPage: true });
  await field.selectOption('ftle');
  h = await waitForNewDrawing(h);

  await page.getByLabel('FTLE ridges').check();
  h = await waitForNewDrawing(h);
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /\d+ FTLE ridges drawn/);
  await page.getByLabel('Velocity arrows').check();
  h = await waitForNewDrawing(h);

  // Ridges stay over a field of the series too.
  await field.selectOption('vorticity');
  h = await waitForNewDrawing(h);
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /^vorticity.*FTLE ridges drawn/);

  // Zoom with the wheel about the middle of the plot, then pan by dragging. The side panel
  // is taller than the window: clicking its lower controls scrolled the map out of view.
  await page.locator('#field-map').scrollIntoViewIfNeeded();
  const box = await page.locator('#field-map').boundingBox();
  const cx = box.x + box.width / 2;
  const cy = box.y + box.height / 2;
  await page.mouse.move(cx, cy);
  await page.mouse.wheel(0, -600);
  h = await waitForNewDrawing(h);
  await page.mouse.down();
  await page.mouse.move(cx + 80, cy + 20, { steps: 4 });
  await page.mouse.up();
  h = await waitForNewDrawing(h);
  await page.screenshot({ path: join(ARTIFACTS, 'ftle-ridges-zoomed.png'), fullPage: true });

  // The probe names x, y, the field and the units.
  await page.mouse.move(cx + 10, cy + 5);
  await page.waitForFunction(() => document.getElementById('probe').textContent.startsWith('x ='));
  assert.match(await page.locator('#probe').textContent(),
    /^x = \S+ m, y = \S+ m · vorticity ω = (\S+ 1\/s|no data)$/);
  await field.selectOption('ftle');
  h = await waitForNewDrawing(h);
  await page.mouse.move(cx + 12, cy + 5);
  await page.waitForFunction(() => document.getElementById('probe').textContent.includes('FTLE σ'));
  assert.match(await page.locator('#probe').textContent(), /· FTLE σ = (\S+ 1\/s|no data)$/);

  // Keyboard: reset with 0, zoom with +, and the button resets too.
  await page.locator('#field-map').focus();
  await page.keyboard.press('0');
  h = await waitForNewDrawing(h);
  await page.keyboard.press('+');
  h = await waitForNewDrawing(h);
  await page.getByRole('button', { name: 'Reset zoom' }).click();
  await waitForNewDrawing(h);
  await page.getByLabel('Velocity arrows').uncheck();
});

test('cancelling a large run keeps the page responsive and the earlier result', async () => {
  await setGrid(1000, 400);
  await page.getByRole('button', { name: 'Compute FTLE' }).click();
  await page.locator('#progress').waitFor({ state: 'visible', timeout: 5000 });
  await page.waitForFunction(() => document.getElementById('progress-bar').value > 0, null, { timeout: 30000 });
  assert.match(await page.locator('#progress-text').textContent(), /% · .* left$/);
  // Responsive while the workers compute: a round trip through the page's event loop.
  const t = Date.now();
  await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => r())));
  assert.ok(Date.now() - t < 1000, 'the page answered within a second');
  await page.screenshot({ path: join(ARTIFACTS, 'ftle-progress.png'), fullPage: true });
  await page.getByRole('button', { name: 'Cancel' }).click();
  await page.waitForFunction(() => document.body.dataset.run === 'cancelled', null, { timeout: 3000 });
  assert.equal(await page.locator('#progress').isHidden(), true);
  assert.match(await page.locator('#message').textContent(), /cancelled/);
  assert.deepEqual(await transportSummary(), firstResult, 'the earlier result is kept');
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /^FTLE σ/);
  // Fresh workers compute the next run.
  await setGrid(48, 20);
  assert.equal(await computeAndWait(), 'done');
});

test('a panic inside a worker becomes a readable message and the pool recovers', async () => {
  const outcome = await page.evaluate(() => window.sillagePage.runJob('self_test_panic'));
  assert.match(outcome, /^JobFailed: .*deliberate panic requested by a self-test/s);
  const before = await transportSummary();
  await setGrid(40, 16);
  assert.equal(await computeAndWait(), 'done');
  const after = await transportSummary();
  assert.equal(after.id, before.id + 1);
  assert.deepEqual(after.grid, [40, 16]);
});

test('the new controls are labelled and reachable with Tab', async () => {
  const ids = ['tr-t0', 'tr-horizon', 'tr-direction', 'tr-nx', 'tr-ny', 'tr-integrator', 'tr-step',
    'tr-boundary', 'tr-route', 'compute-ftle', 'transport-defaults', 'show-ridges', 'show-arrows',
    'reset-zoom', 'field-map'];
  await page.locator('body').focus();
  const reached = new Set();
  for (let i = 0; i < 60; i += 1) {
    await page.keyboard.press('Tab');
    reached.add(await page.evaluate(() => document.activeElement?.id || document.activeElement?.tagName));
  }
  for (const id of ids) assert.ok(reached.has(id), `Tab never reaches #${id}`);
  for (const id of ids.filter((x) => x !== 'field-map')) {
    const name = await page.locator(`#${id}`).evaluate((el) => el.labels?.[0]?.textContent
      || el.getAttribute('aria-label') || el.textContent);
    assert.ok(name && name.trim(), `#${id} has no label`);
  }
});

test('no request went to any other host, and the page logged no errors', async (t) => {
  const background = proxy.log.filter((e) => BROWSER_BACKGROUND_HOSTS.has(proxy.hostOf(e)));
  t.diagnostic(`browser background requests excluded: ${background.length}`);
  const foreign = proxy.log.filter((e) => !BROWSER_BACKGROUND_HOSTS.has(proxy.hostOf(e)));
  assert.deepEqual(foreign, [], 'requests that reached the proxy');
  assert.deepEqual(pageProblems, []);
});
