// The whole workflow in the page, then replayed by the command-line tool from the recipe
// the page saved. On the demo wake: load → clean (defaults) → POD (rank 6) → FTLE (48 × 20
// tracers, t₀ = 0.5 s, |T| = 0.3 s) → sensitivity of f = mean + pod(1-2) to g = pod(3-4)
// with ε = 1e-3 → "Save recipe" and the FTLE and sensitivity maps as .npz downloads. The
// test adds an `exports` list to the saved recipe, runs `sillage run RECIPE DEMO --out-dir`
// and checks that the page's downloaded numbers are the CLI's (status flags exactly, maps to
// 1e-5 relative), that the canvases are not blank, and that no request left the machine
// (recording proxy).
//
// A recipe's `transport` step is the FTLE of the (cleaned) working series, as the page's
// FTLE card maps it (crate/src/recipe); the FTLE of the model flow f is part of the
// sensitivity file.
//
// Needs www/pkg (bash www/build.sh) and the CLI: $SILLAGE_BIN, else target/debug/sillage
// (CARGO_TARGET_DIR is honoured). Screenshots go to tests/artifacts/ (git-ignored).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { npzArrays, npzNames } from './lib/npz.mjs';
import {
  startDemoSite, foreignRequests, watchProblems, datasetShown, downloadOf,
} from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const ARTIFACTS = join(ROOT, 'tests', 'artifacts');
const DEMO = join(ROOT, 'demo-fields', 'fin-wake.npz');
const TARGET = process.env.CARGO_TARGET_DIR ?? join(ROOT, 'target');
const CLI = process.env.SILLAGE_BIN ?? join(TARGET, 'debug', 'sillage');
const TOLERANCE = 1e-5;

let site;
let proxy;
let server;
let browser;
let page;
let scratch;
const problems = [];
const files = {}; // what the page saved: {recipe, ftle, sensitivity, zeta}

/** Distinct colours on a canvas: a blank or flat canvas has very few. */
const distinctColours = (id) => page.evaluate((cid) => {
  const c = document.getElementById(cid);
  const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
  const seen = new Set();
  for (let i = 0; i < d.length; i += 4) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
  return seen.size;
}, id);

/** Waits until body[data-`key`] is one of the final states; returns it. */
async function settled(key, timeout = 120000) {
  await page.waitForFunction((k) => ['done', 'failed', 'refused', 'cancelled'].includes(document.body.dataset[k]),
    key, { timeout });
  return page.evaluate((k) => document.body.dataset[k], key);
}

/**
 * Largest difference of `mine` from `ref` relative to the value, with a floor of 1e-3 of the
 * largest |ref| (values near zero), over the nodes where `use(c)`.
 */
function worstRelative(mine, ref, use) {
  let scale = 0;
  for (let c = 0; c < ref.length; c += 1) if (use(c)) scale = Math.max(scale, Math.abs(ref[c]));
  let worst = 0;
  for (let c = 0; c < ref.length; c += 1) {
    if (!use(c)) continue;
    worst = Math.max(worst, Math.abs(mine[c] - ref[c]) / Math.max(Math.abs(ref[c]), 1e-3 * scale));
  }
  return worst;
}

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  assert.ok(existsSync(CLI), `the CLI ${CLI} is missing: build it or set SILLAGE_BIN`);
  mkdirSync(ARTIFACTS, { recursive: true });
  scratch = mkdtempSync(join(tmpdir(), 'sillage-workflow-'));
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
  if (scratch && !process.env.KEEP) rmSync(scratch, { recursive: true, force: true });
});

test('the page runs the whole workflow and saves the recipe and the maps', async () => {
  // Clean with the defaults.
  await page.getByRole('button', { name: 'Clean', exact: true }).click();
  assert.equal(await settled('clean', 60000), 'done', await page.locator('#message').textContent());

  // POD of rank 6.
  await page.getByLabel('Method', { exact: true }).selectOption('pod');
  await page.getByLabel('Rank', { exact: true }).fill('6');
  await page.getByRole('button', { name: 'Compute modes' }).click();
  assert.equal(await settled('modes'), 'done', await page.locator('#modes-warnings').textContent());
  assert.equal(await page.evaluate(() => window.sillageAnalysis.modes().count), 6);
  assert.ok(await distinctColours('modes-chart-a') > 3, 'the energy chart is not blank');
  assert.ok(await distinctColours('field-map') > 50, 'the mode shape is not blank');
  // A picked mode's numbers export too (unit-norm shape on the data grid).
  await page.getByLabel('Map data as').selectOption('csv');
  const shapeCsv = join(scratch, 'shape.csv');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), shapeCsv),
    'sillage-pod-mode-1-magnitude.csv');
  assert.match(readFileSync(shapeCsv, 'utf8').split('\n')[0], /^x \[m\],y \[m\],pod_mode_1_magnitude \[1\]/);
  await page.screenshot({ path: join(ARTIFACTS, 'workflow-modes.png'), fullPage: true });

  // FTLE of the cleaned series on a small grid.
  await page.getByLabel('Start time t₀').fill('0.5');
  await page.getByLabel('Horizon |T|').fill('0.3');
  await page.getByLabel('Tracers along x').fill('48');
  await page.getByLabel('Tracers along y').fill('20');
  await page.getByRole('button', { name: 'Compute FTLE' }).click();
  assert.equal(await settled('run', 90000), 'done', await page.locator('#message').textContent());
  await page.getByLabel('Field', { exact: true }).selectOption('ftle');
  assert.ok(await distinctColours('field-map') > 50, 'the FTLE map is not blank');
  assert.ok(await distinctColours('colorbar') > 50, 'the colour bar is not blank');
  await page.screenshot({ path: join(ARTIFACTS, 'workflow-ftle.png'), fullPage: true });

  // Sensitivity of f to g.
  await page.getByLabel('Model flow f').fill('mean + pod(1-2)');
  await page.getByLabel('Perturbation g').fill('pod(3-4)');
  await page.getByLabel('ε for Δσ').fill('1e-3');
  await page.getByRole('button', { name: 'Compute sensitivity' }).click();
  const state = await settled('sensitivity');
  assert.equal(state, 'done', `${await page.locator('#message').textContent()} ${await page.locator('#sens-warnings').textContent()}`);
  assert.ok(await distinctColours('field-map') > 50, 'the ζ map is not blank');
  await page.screenshot({ path: join(ARTIFACTS, 'workflow-sensitivity.png'), fullPage: true });

  // Downloads: the recipe, the FTLE map, every sensitivity map, and ζ alone.
  files.recipe = join(scratch, 'page-recipe.json');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save recipe' }), files.recipe),
    'sillage-recipe.json');
  await page.getByLabel('Map data as').selectOption('npz');
  await page.getByLabel('Field', { exact: true }).selectOption('ftle');
  files.ftle = join(scratch, 'page-ftle.npz');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), files.ftle),
    'sillage-ftle.npz');
  files.sensitivity = join(scratch, 'page-sensitivity.npz');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save all sensitivity maps (.npz)' }),
    files.sensitivity), 'sillage-sensitivity.npz');
  await page.getByLabel('Field', { exact: true }).selectOption('sens:zeta');
  files.zeta = join(scratch, 'page-zeta.npz');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), files.zeta),
    'sillage-sens-zeta.npz');
});

test('the saved recipe holds every panel\'s part', () => {
  assert.ok(files.recipe, 'the workflow did not get as far as saving the recipe');
  const recipe = JSON.parse(readFileSync(files.recipe, 'utf8'));
  assert.equal(recipe.format, 'sillage-recipe');
  assert.deepEqual(recipe.cleaning, { threshold: 2, epsilon: null, passes: 3 });
  assert.deepEqual(recipe.modes, { method: 'pod', rank: 6 });
  assert.equal(recipe.model, 'mean + pod(1-2)');
  assert.equal(recipe.perturbation, 'pod(3-4)');
  assert.deepEqual(recipe.sensitivity, { epsilon: 1e-3, g_ref: null });
  assert.equal(recipe.transport.t0, 0.5);
  assert.equal(recipe.transport.horizon, 0.3);
  assert.deepEqual(recipe.transport.grid, [48, 20]);
});

test('`sillage run` on the saved recipe writes the page\'s numbers', (t) => {
  assert.ok(files.sensitivity, 'the workflow did not get as far as the downloads');
  const recipe = JSON.parse(readFileSync(files.recipe, 'utf8'));
  recipe.exports = [{ what: 'ftle', file: 'ftle.npz' }, { what: 'sensitivity', file: 'sens.npz' }];
  const withExports = join(scratch, 'recipe-exports.json');
  writeFileSync(withExports, JSON.stringify(recipe));
  const out = join(scratch, 'cli');
  execFileSync(CLI, ['run', withExports, DEMO, '--out-dir', out], { stdio: 'pipe' });

  // Every sensitivity map: the same file layout, the same numbers.
  const cliSens = join(out, 'sens.npz');
  assert.deepEqual(npzNames(files.sensitivity), npzNames(cliSens), 'the same arrays in the same order');
  const maps = ['ftle', 'zeta', 'ms', 'ms_g', 'xi', 'strain_bound', 'sigma_ms', 'delta_ftle', 'exit_time'];
  const scalars = ['t0', 'horizon', 'g_ref', 'epsilon'];
  const mine = npzArrays(files.sensitivity, [...maps, 'flag', 'x', 'y', ...scalars]);
  const cli = npzArrays(cliSens, [...maps, 'flag', 'x', 'y', ...scalars]);
  assert.deepEqual(cli.zeta.shape, [20, 48]);
  assert.deepEqual(Array.from(mine.flag.data), Array.from(cli.flag.data), 'status flags');
  assert.deepEqual(Array.from(mine.x.data), Array.from(cli.x.data));
  assert.deepEqual(Array.from(mine.y.data), Array.from(cli.y.data));
  for (const s of scalars) {
    const [a, b] = [mine[s].data[0], cli[s].data[0]];
    assert.ok(Math.abs(a - b) <= TOLERANCE * Math.abs(b), `${s}: page ${a}, CLI ${b}`);
  }
  const valid = (c) => cli.flag.data[c] <= 2;
  for (const name of maps) {
    const worst = worstRelative(mine[name].data, cli[name].data, valid);
    t.diagnostic(`sensitivity ${name}: largest relative difference page vs CLI ${worst.toExponential(2)}`);
    assert.ok(worst <= TOLERANCE, `${name}: largest relative difference ${worst}`);
  }

  // ζ saved alone: the same values, NaN exactly where there is none.
  const zeta = npzArrays(files.zeta, ['zeta']).zeta.data;
  for (let c = 0; c < zeta.length; c += 1) {
    if (valid(c)) assert.equal(zeta[c], mine.zeta.data[c]);
    else assert.ok(Number.isNaN(zeta[c]), `ζ at ${c} should be NaN`);
  }

  // The page's FTLE map (of the cleaned series) is the recipe's FTLE.
  const ref = npzArrays(join(out, 'ftle.npz'), ['ftle', 'flag']);
  const page = npzArrays(files.ftle, ['ftle', 'mask', 't']);
  assert.deepEqual(page.ftle.shape, [20, 48]);
  assert.equal(page.t.data[0], 0.5);
  const has = (c) => ref.flag.data[c] <= 2;
  for (let c = 0; c < ref.ftle.data.length; c += 1) {
    assert.equal(Number.isNaN(page.ftle.data[c]), !has(c), `FTLE value present at ${c}`);
    assert.equal(page.mask.data[c] === 1, !has(c), `FTLE mask at ${c}`);
  }
  const worst = worstRelative(page.ftle.data, ref.ftle.data, has);
  t.diagnostic(`FTLE of the cleaned series: largest relative difference page vs CLI ${worst.toExponential(2)}`);
  assert.ok(worst <= TOLERANCE, `FTLE: largest relative difference ${worst}`);
});

test('the recipe brings every panel back after a reload, without computing', async () => {
  await page.reload();
  await datasetShown(page);
  await page.waitForFunction(() => document.body.dataset.clean === 'done', null, { timeout: 60000 });
  assert.equal(await page.evaluate(() => window.sillageAnalysis.rawKept()), true, 'cleaned again');
  assert.equal(await page.getByLabel('Rank', { exact: true }).inputValue(), '6');
  assert.equal(await page.getByLabel('Model flow f').inputValue(), 'mean + pod(1-2)');
  assert.equal(await page.getByLabel('Perturbation g').inputValue(), 'pod(3-4)');
  assert.equal(await page.getByLabel('ε for Δσ').inputValue(), '0.001');
  assert.equal(await page.getByLabel('Tracers along x').inputValue(), '48');
  // Nothing long started by itself.
  assert.equal(await page.evaluate(() => window.sillageAnalysis.modes()), null);
  assert.equal(await page.evaluate(() => window.sillageAnalysis.sensitivity()), null);
  assert.equal(await page.evaluate(() => window.sillagePage.transport()), null);
});

test('no request went to any other host, and the page logged no errors', () => {
  assert.deepEqual(foreignRequests(proxy), [], 'requests that reached the proxy');
  assert.deepEqual(problems, []);
});
