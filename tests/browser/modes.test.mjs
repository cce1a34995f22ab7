// Modes in the page: POD of the demo computed by the core in the tab, its energies equal to
// `sillage modes --method pod`; the energy chart, a picked mode's shape on the field map and
// its coefficients; picking by clicking the chart and by the number input; "add to g"
// editing the sensitivity card's selection; DMD and SPOD charts; no request to any other
// host (recording proxy).
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

let site;
let proxy;
let server;
let browser;
let page;
let scratch;
const problems = [];

const distinctColours = (id) => page.evaluate((cid) => {
  const c = document.getElementById(cid);
  const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
  const seen = new Set();
  for (let i = 0; i < d.length; i += 4) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2] | (d[i + 3] << 24));
  return seen.size;
}, id);

async function computeModes(method, rank = '') {
  await page.getByLabel('Method').selectOption(method);
  await page.getByLabel('Rank').fill(rank);
  await page.evaluate(() => { document.body.dataset.modes = ''; });
  await page.getByRole('button', { name: 'Compute modes' }).click();
  await page.waitForFunction(() => ['done', 'failed'].includes(document.body.dataset.modes), null, { timeout: 120000 });
  assert.equal(await page.evaluate(() => document.body.dataset.modes), 'done',
    await page.locator('#modes-warnings').textContent());
}

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  assert.ok(existsSync(CLI), `the CLI ${CLI} is missing: build it or set SILLAGE_BIN`);
  mkdirSync(ARTIFACTS, { recursive: true });
  scratch = mkdtempSync(join(tmpdir(), 'sillage-modes-'));
  site = await startDemoSite(ROOT);
  ({ proxy, server, browser } = site);
  page = await browser.newPage({ viewport: { width: 1280, height: 1100 } });
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
  await page.waitForFunction(() => !document.getElementById('md-run').disabled, null, { timeout: 30000 });
});

after(async () => {
  await site?.close();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

test('POD energies from the page equal the command-line tool\'s', async (t) => {
  await computeModes('pod');
  const out = join(scratch, 'pod.npz');
  execFileSync(CLI, ['modes', DEMO, '--method', 'pod', '--out', out], { stdio: 'pipe' });
  const cli = npzArrays(out, ['energies', 'energy_fraction']);
  const mine = await page.evaluate(() => window.sillageAnalysis.modes().pod);
  for (let j = 0; j < 2; j += 1) {
    const rel = Math.abs(mine.energies[j] - cli.energies.data[j]) / cli.energies.data[j];
    t.diagnostic(`POD mode ${j + 1}: energy ${mine.energies[j]} (page) vs ${cli.energies.data[j]} (CLI)`);
    assert.ok(rel < 1e-9, `energy of mode ${j + 1}: relative difference ${rel}`);
    assert.ok(Math.abs(mine.energy_fraction[j] - cli.energy_fraction.data[j]) < 1e-12);
  }
  assert.match(await page.locator('#modes-summary').textContent(), /^POD: \d+ modes; energy of the first: /);
});

test('the energy chart, the picked mode\'s shape and its coefficients are drawn', async () => {
  assert.ok(await distinctColours('modes-chart-a') > 5, 'energy chart blank');
  assert.ok(await distinctColours('modes-coefficients') > 5, 'coefficient chart blank');
  assert.match(await page.locator('#field-map').getAttribute('aria-label'), /^POD mode 1, \|u\|/);
  assert.ok(await distinctColours('field-map') > 50, 'mode shape blank');
  assert.match(await page.locator('#md-describe').textContent(), /^POD mode 1: \S+ % of the fluctuation energy/);

  // Pick by number, then the u component.
  await page.getByLabel('Mode', { exact: true }).fill('3');
  await page.getByLabel('Mode', { exact: true }).press('Enter');
  await page.waitForFunction(() => /^POD mode 3/.test(document.getElementById('md-describe').textContent));
  await page.getByLabel('Show').selectOption('u');
  await page.waitForFunction(() => /^POD mode 3, u/.test(document.getElementById('field-map').getAttribute('aria-label')));
  await page.screenshot({ path: join(ARTIFACTS, 'modes-pod.png'), fullPage: true });

  // Pick by clicking the first bar of the energy chart (near its foot, inside the plot).
  await page.locator('#modes-chart-a').scrollIntoViewIfNeeded();
  const box = await page.locator('#modes-chart-a').boundingBox();
  const hit = await page.evaluate(() => {
    const o = window.sillageAnalysis.modes();
    return { x: o.charts[0].x_range, n: o.charts[0].curves[0].x.length };
  });
  // The plot spans the canvas minus the chart's padding (58 px left, 14 px right).
  const plotW = box.width - 58 - 14;
  const x = box.x + 58 + ((1 - hit.x[0]) / (hit.x[1] - hit.x[0])) * plotW;
  await page.mouse.click(x, box.y + box.height - 40 - 3);
  await page.waitForFunction(() => /^POD mode 1:/.test(document.getElementById('md-describe').textContent));
  assert.equal(await page.getByLabel('Mode', { exact: true }).inputValue(), '1');
});

test('"add to g" appends the picked mode to the perturbation', async () => {
  await page.getByLabel('Mode', { exact: true }).fill('5');
  await page.getByLabel('Mode', { exact: true }).press('Enter');
  await page.waitForFunction(() => /^POD mode 5/.test(document.getElementById('md-describe').textContent));
  const before = await page.getByLabel('Perturbation g').inputValue();
  await page.getByRole('button', { name: 'Add to g' }).click();
  assert.equal(await page.getByLabel('Perturbation g').inputValue(), `${before} + pod(5)`);
  await page.getByRole('button', { name: 'Add to f' }).click();
  assert.equal(await page.getByLabel('Model flow f').inputValue(), 'mean + pod(1-2) + pod(5)');
});

test('DMD shows eigenvalues with the unit circle and amplitudes in Hz; SPOD its spectrum', async () => {
  await computeModes('dmd', '12');
  assert.match(await page.locator('#modes-summary').textContent(), /^DMD: rank 12; frequencies by amplitude: .*Hz/);
  assert.equal(await page.locator('#modes-chart-b').isVisible(), true);
  assert.ok(await distinctColours('modes-chart-a') > 5);
  assert.ok(await distinctColours('modes-chart-b') > 5);
  assert.match(await page.locator('#modes-chart-b').getAttribute('aria-label'), /frequency \(Hz\)/);
  await page.getByLabel('Mode', { exact: true }).fill('2');
  await page.getByLabel('Mode', { exact: true }).press('Enter');
  await page.waitForFunction(() => /^DMD mode 2: f = \S+ Hz/.test(document.getElementById('md-describe').textContent));
  await page.screenshot({ path: join(ARTIFACTS, 'modes-dmd.png'), fullPage: true });

  await computeModes('spod');
  assert.match(await page.locator('#modes-summary').textContent(), /^SPOD: \d+ blocks/);
  assert.equal(await page.locator('#modes-chart-b').isVisible(), false);
  assert.equal(await page.locator('#modes-coefficients').isVisible(), false);
  await page.getByRole('button', { name: 'Add to g' }).click();
  assert.match(await page.getByLabel('Perturbation g').inputValue(), /\+ spod\(f=[\d.]+\.\.[\d.]+\)$/);
  await page.screenshot({ path: join(ARTIFACTS, 'modes-spod.png'), fullPage: true });
});

test('no request went to any other host, and the page logged no errors', async () => {
  assert.deepEqual(foreignRequests(proxy), [], 'requests that reached the proxy');
  assert.deepEqual(problems, []);
});
