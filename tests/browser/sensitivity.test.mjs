// Cleaning and mode sensitivity in the page: the demo cleaned in the tab (report, undo),
// sensitivity of f = mean + pod(1-2) to g = pod(3-4) computed by the workers on a small
// grid and compared with `sillage clean` + `sillage sensitivity` on the same settings; the
// views (ζ with its normalisation and f's ridges, MS, |ξ|), the warnings and no request to
// any other host (recording proxy).
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
import { npzArrays } from './lib/npz.mjs';
import { startDemoSite, foreignRequests, watchProblems, datasetShown } from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const ARTIFACTS = join(ROOT, 'tests', 'artifacts');
const DEMO = join(ROOT, 'demo-fields', 'fin-wake.npz');
const TARGET = process.env.CARGO_TARGET_DIR ?? join(ROOT, 'target');
const CLI = process.env.SILLAGE_BIN ?? join(TARGET, 'release', 'sillage');
const EPSILON = '0.5';

let site;
let proxy;
let server;
let browser;
let page;
let scratch;
const problems = [];

/** Distinct colours on a canvas: a blank or flat canvas has very few. */
const distinctColours = (id) => page.evaluate((cid) => {
  const c = document.getElementById(cid);
  const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
  const seen = new Set();
  for (let i = 0; i < d.length; i += 4) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
  return seen.size;
}, id);

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  assert.ok(existsSync(CLI), `the CLI ${CLI} is missing: build it or set SILLAGE_BIN`);
  mkdirSync(ARTIFACTS, { recursive: true });
  scratch = mkdtempSync(join(tmpdir(), 'sillage-sens-'));
  site = await startDemoSite(ROOT);
  ({ proxy, server, browser } = site);
  page = await browser.newPage({ viewport: { width: 1280, height: 1100 } });
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
  await page.waitForFunction(() => !document.getElementById('compute-ftle').disabled, null, { timeout: 30000 });
});

after(async () => {
  await site?.close();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

test('cleaning replaces the working series, reports what changed and can be undone', async () => {
  assert.equal(await page.getByLabel('Threshold').inputValue(), '2');
  assert.equal(await page.getByLabel('Passes').inputValue(), '3');
  // The demo carries spurious vectors: the transport card warns about noise before cleaning.
  await page.locator('#transport-warnings li[data-code="noisy_data"]').waitFor();
  await page.getByRole('button', { name: 'Clean', exact: true }).click();
  await page.waitForFunction(() => ['done', 'failed'].includes(document.body.dataset.clean), null, { timeout: 60000 });
  assert.equal(await page.evaluate(() => document.body.dataset.clean), 'done', await page.locator('#message').textContent());
  const report = await page.locator('#clean-report').textContent();
  assert.match(report, /^Cleaned: [\d,]+ outliers and 0 missing vectors replaced: \S+ % of [\d,]+ valid vectors/);
  assert.equal(await page.evaluate(() => window.sillageAnalysis.rawKept()), true);
  // After cleaning the noise warning is gone (the core re-samples the working series).
  await page.locator('#transport-warnings li[data-code="noisy_data"]').waitFor({ state: 'detached' });
  await page.screenshot({ path: join(ARTIFACTS, 'clean-report.png'), fullPage: true });

  await page.getByRole('button', { name: 'Undo cleaning' }).click();
  await page.waitForFunction(() => document.body.dataset.clean === 'undone');
  await page.locator('#transport-warnings li[data-code="noisy_data"]').waitFor();
  assert.equal(await page.evaluate(() => window.sillageAnalysis.rawKept()), false);
  await page.getByRole('button', { name: 'Clean', exact: true }).click();
  await page.waitForFunction(() => document.body.dataset.clean === 'done', null, { timeout: 60000 });
});

test('Dormand–Prince is refused for sensitivity with the reason', async () => {
  await page.getByLabel('Integrator').selectOption('dormand_prince');
  await page.getByRole('button', { name: 'Compute sensitivity' }).click();
  await page.waitForFunction(() => ['refused', 'failed', 'done'].includes(document.body.dataset.sensitivity),
    null, { timeout: 60000 });
  const refusal = page.locator('#sens-warnings li[data-code="needs_rk4"]');
  await refusal.waitFor();
  assert.match(await refusal.textContent(), /fixed-step RK4/);
  await page.getByLabel('Integrator').selectOption('rk4');
});

test('sensitivity maps from the workers equal the command-line tool\'s on the same data', async (t) => {
  await page.getByLabel('Horizon |T|').fill('0.3');
  await page.getByLabel('Tracers along x').fill('40');
  await page.getByLabel('Tracers along y').fill('16');
  await page.getByLabel('ε for Δσ').fill(EPSILON);
  const t0 = await page.getByLabel('Start time t₀').inputValue();
  const step = await page.getByLabel('RK4 step').inputValue();
  await page.getByRole('button', { name: 'Compute sensitivity' }).click();
  await page.waitForFunction(() => ['done', 'failed', 'refused', 'cancelled'].includes(document.body.dataset.sensitivity)
    && document.body.dataset.sensitivity !== 'refused', null, { timeout: 120000 }).catch(() => {});
  const state = await page.evaluate(() => document.body.dataset.sensitivity);
  assert.equal(state, 'done', `${await page.locator('#message').textContent()} ${await page.locator('#sens-warnings').textContent()}`);

  // The views: ζ is shown first, with its normalisation and the centring of its colours.
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /^ζ = σ_MS − σ/);
  const legend = await page.locator('#result-legend').textContent();
  assert.match(legend, /centred on the median/);
  assert.match(legend, /sigma_ms = ln\(ms_g \/ \(\|T\| \* g_ref\)\) \/ \|T\|/);
  assert.ok(await distinctColours('field-map') > 50, 'the ζ map is not blank');
  const summary = await page.locator('#sens-summary').textContent();
  assert.match(summary, /^Sensitivity on 40 × 16 tracers/);
  assert.match(summary, /g_ref = \S+ m\/s/);
  assert.match(summary, /Pearson r = \S+, with \|Δσ\| r = \S+, Spearman ρ with \|Δσ\| = \S+\./);
  await page.getByLabel('FTLE ridges').check();
  await page.waitForFunction(() => /FTLE ridges drawn/.test(document.getElementById('field-map').getAttribute('aria-label')));
  await page.screenshot({ path: join(ARTIFACTS, 'sensitivity-zeta.png'), fullPage: true });

  const field = page.getByLabel('Field', { exact: true });
  await field.selectOption('sens:ms');
  await page.waitForFunction(() => /^MS \(uniform bound\)/.test(document.getElementById('field-map').getAttribute('aria-label')));
  assert.match(await page.locator('#colorbar').getAttribute('aria-label'), /[ (]s\)/);
  assert.ok(await distinctColours('field-map') > 50, 'the MS map is not blank');
  await field.selectOption('sens:xi');
  await page.waitForFunction(() => /^deviation \|ξ\|/.test(document.getElementById('field-map').getAttribute('aria-label')));
  assert.match(await page.locator('#colorbar').getAttribute('aria-label'), /[ (]m\)/);
  await page.screenshot({ path: join(ARTIFACTS, 'sensitivity-xi.png'), fullPage: true });
  await field.selectOption('sens:delta_ftle');
  await page.waitForFunction(() => /^Δσ/.test(document.getElementById('field-map').getAttribute('aria-label')));

  // The same with the command-line tool: clean, then sensitivity, same options.
  const cleaned = join(scratch, 'cleaned.npz');
  const out = join(scratch, 'sensitivity.npz');
  execFileSync(CLI, ['clean', DEMO, '--out', cleaned], { stdio: 'pipe' });
  execFileSync(CLI, ['sensitivity', cleaned, '--model', 'mean + pod(1-2)', '--perturbation', 'pod(3-4)',
    '--t0', t0, '--horizon', '0.3', '--grid', '40x16', '--step', step, '--epsilon', EPSILON, '--out', out],
  { stdio: 'pipe' });
  const names = ['zeta', 'ms', 'xi', 'ms_g', 'delta_ftle', 'flag'];
  const cli = npzArrays(out, names);
  assert.deepEqual(cli.zeta.shape, [16, 40]);
  const mine = await page.evaluate((keys) => {
    const r = window.sillageAnalysis.sensitivity();
    return Object.fromEntries(keys.map((k) => [k, Array.from(r.arrays[k])]));
  }, names);
  assert.deepEqual(mine.flag, Array.from(cli.flag.data), 'status flags');
  for (const name of ['zeta', 'ms', 'xi', 'ms_g', 'delta_ftle']) {
    const ref = cli[name].data;
    const scale = Math.max(...Array.from(ref, Math.abs));
    let worst = 0;
    for (let c = 0; c < ref.length; c += 1) {
      // Relative to the value, with a floor of 1e-3 of the largest (values near zero).
      const err = Math.abs(mine[name][c] - ref[c]) / Math.max(Math.abs(ref[c]), 1e-3 * scale);
      worst = Math.max(worst, err);
    }
    t.diagnostic(`${name}: largest relative difference page vs CLI ${worst.toExponential(2)}`);
    assert.ok(worst <= 1e-5, `${name}: largest relative difference ${worst}`);
  }
});

test('the new controls are labelled and reachable with Tab', async () => {
  const ids = ['cl-threshold', 'cl-passes', 'cl-epsilon', 'clean-run', 'clean-undo', 'sens-f', 'sens-g',
    'sens-eps', 'sens-gref', 'sens-run', 'md-method', 'md-rank', 'md-run'];
  await page.locator('body').focus();
  const reached = new Set();
  for (let i = 0; i < 90; i += 1) {
    await page.keyboard.press('Tab');
    reached.add(await page.evaluate(() => document.activeElement?.id || document.activeElement?.tagName));
  }
  for (const id of ids) assert.ok(reached.has(id), `Tab never reaches #${id}`);
  for (const id of ids) {
    const name = await page.locator(`#${id}`).evaluate((el) => el.labels?.[0]?.textContent
      || el.getAttribute('aria-label') || el.textContent);
    assert.ok(name && name.trim(), `#${id} has no label`);
  }
});

test('no request went to any other host, and the page logged no errors', async () => {
  assert.deepEqual(foreignRequests(proxy), [], 'requests that reached the proxy');
  assert.deepEqual(problems, []);
});
