// The recipe and sharing: save the recipe, reload, settings restored; a broken recipe
// refused with the core's reason; a recipe dropped on the page applied; a share link opened
// in a fresh browser profile applies the settings; and the single-file build opened from
// disk (file://) starts the core, shows the drop zone, computes an FTLE map from a file the
// user opens, and makes no request at all.
//
// Needs www/pkg (bash www/build.sh); builds the single file into a scratch folder itself.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { startRecordingProxy } from './lib/proxy.mjs';
import { startPageServer } from './lib/server.mjs';
import {
  launchBrowser, foreignRequests, watchProblems, downloadOf, datasetShown, computeSmallFtle,
} from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const ARTIFACTS = join(ROOT, 'tests', 'artifacts');
const DEMO = join(ROOT, 'demo-fields', 'fin-wake.npz');

let proxy;
let server;
let browser;
let context;
let page;
let scratch;
const problems = [];

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')), 'www/pkg is missing: run `bash www/build.sh` first');
  mkdirSync(ARTIFACTS, { recursive: true });
  scratch = mkdtempSync(join(tmpdir(), 'sillage-share-'));
  proxy = await startRecordingProxy();
  server = await startPageServer(ROOT, ['--demo-dir', join(ROOT, 'demo-fields')]);
  browser = await launchBrowser(proxy.port);
  context = await browser.newContext({ viewport: { width: 1280, height: 1000 }, acceptDownloads: true });
  page = await context.newPage();
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
  await page.waitForFunction(() => !document.getElementById('compute-ftle').disabled, null, { timeout: 30000 });
});

after(async () => {
  await browser?.close();
  await server?.close();
  await proxy?.close();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

/** Settings a test changes, read back from the controls. */
const controls = (p) => p.evaluate(() => ({
  horizon: document.getElementById('tr-horizon').value,
  direction: document.getElementById('tr-direction').value,
  nx: document.getElementById('tr-nx').value,
  ny: document.getElementById('tr-ny').value,
  quantity: document.getElementById('quantity').value,
  k: document.getElementById('snapshot').value,
}));

const WANT = { horizon: '0.3', direction: 'backward', nx: '30', ny: '12', quantity: 'vorticity', k: '5' };

async function changeSettings(p) {
  await p.getByLabel('Start time t₀').fill('1');
  await p.getByLabel('Horizon |T|').fill('0.3');
  await p.getByLabel('Direction').selectOption('backward');
  await p.getByLabel('Tracers along x').fill('30');
  await p.getByLabel('Tracers along y').fill('12');
  await p.getByLabel('Field', { exact: true }).selectOption('vorticity');
  await p.locator('#snapshot').evaluate((slider) => {
    slider.value = '5';
    slider.dispatchEvent(new Event('input', { bubbles: true }));
  });
  await p.waitForFunction(() => document.getElementById('snapshot').value === '5');
}

test('save recipe, reload the page: the settings come back and the demo loads again', async () => {
  await changeSettings(page);
  assert.deepEqual(await controls(page), WANT);
  const path = join(scratch, 'recipe.json');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save recipe' }), path), 'sillage-recipe.json');
  const recipe = JSON.parse(readFileSync(path, 'utf8'));
  assert.equal(recipe.format, 'sillage-recipe');
  assert.equal(recipe.transport.horizon, 0.3);
  assert.equal(recipe.transport.direction, 'backward');
  assert.deepEqual(recipe.transport.grid, [30, 12]);
  assert.equal(recipe.view.quantity, 'vorticity');
  assert.equal(recipe.view.k, 5);
  assert.equal(recipe.view.source, 'demo');
  // The copy in localStorage is written shortly after each change.
  await page.waitForFunction(() => JSON.parse(localStorage.getItem('sillage.recipe') ?? '{}').view?.k === 5);

  await page.reload();
  await datasetShown(page);
  await page.waitForFunction(() => document.getElementById('tr-horizon').value === '0.3', null, { timeout: 20000 });
  assert.deepEqual(await controls(page), WANT);
  assert.match(await page.locator('#message').textContent(), /settings .* restored/);
  await page.screenshot({ path: join(ARTIFACTS, 'share-restored.png'), fullPage: true });
});

test('a broken recipe is refused with the core\'s reason; a dropped recipe is applied', async () => {
  await page.locator('#recipe-input').setInputFiles({
    name: 'broken.json', mimeType: 'application/json',
    buffer: Buffer.from(JSON.stringify({ format: 'sillage-recipe', version: 1, transprt: {} })),
  });
  await page.waitForFunction(() => document.getElementById('message').classList.contains('error'));
  assert.match(await page.locator('#message').textContent(), /broken\.json.*cannot be used as a recipe: .*transprt/s);

  const recipe = JSON.parse(readFileSync(join(scratch, 'recipe.json'), 'utf8'));
  recipe.transport.horizon = 0.25;
  recipe.view.quantity = 'speed';
  await page.evaluate((text) => {
    const dt = new DataTransfer();
    dt.items.add(new File([text], 'mine.json', { type: 'application/json' }));
    document.dispatchEvent(new DragEvent('drop', { dataTransfer: dt, bubbles: true, cancelable: true }));
  }, JSON.stringify(recipe));
  // The settings are applied in more than one task (the view after the transport form):
  // wait for both, so the check does not race the page.
  await page.waitForFunction(() => document.getElementById('tr-horizon').value === '0.25'
    && document.getElementById('quantity').value === 'speed', null, { timeout: 10000 })
    .catch(() => {});
  assert.equal((await controls(page)).horizon, '0.25');
  assert.equal((await controls(page)).quantity, 'speed');
  assert.match(await page.locator('#message').textContent(), /Recipe “mine\.json” applied/);
});

test('a share link opened in a fresh browser profile applies the recipe', async () => {
  await changeSettings(page);
  await page.getByRole('button', { name: 'Copy share link' }).click();
  const link = page.getByLabel('Share link');
  await link.waitFor({ state: 'visible' });
  const url = await link.inputValue();
  assert.ok(url.startsWith(`${server.url}#recipe=`), url);
  assert.match(url.split('#recipe=')[1], /^[A-Za-z0-9_-]+$/);

  const fresh = await browser.newContext({ viewport: { width: 1280, height: 1000 } });
  const other = await fresh.newPage();
  const otherProblems = [];
  watchProblems(other, otherProblems);
  await other.goto(url);
  await datasetShown(other);
  await other.waitForFunction(() => document.getElementById('tr-horizon').value === '0.3', null, { timeout: 20000 });
  assert.deepEqual(await controls(other), WANT);
  assert.match(await other.locator('#message').textContent(), /share link were applied/);
  // The fragment is dropped from the address once applied.
  assert.equal(new URL(other.url()).hash, '');
  await other.screenshot({ path: join(ARTIFACTS, 'share-link-applied.png'), fullPage: true });
  await fresh.close();
  assert.deepEqual(otherProblems, []);
});

test('the single-file page works from disk with no request at all', async (t) => {
  const file = join(scratch, 'sillage-standalone.html');
  execFileSync('python3', [join(ROOT, 'www', 'build-single.py'), '--out', file], { stdio: 'pipe' });
  t.diagnostic(`single file: ${(statSync(file).size / 1e6).toFixed(2)} MB`);
  const url = pathToFileURL(file).href;
  const offline = await browser.newContext({ viewport: { width: 1280, height: 1000 } });
  const p = await offline.newPage();
  const requests = [];
  p.on('request', (r) => requests.push(r.url()));
  offline.on('request', (r) => requests.push(r.url()));
  const offlineProblems = [];
  watchProblems(p, offlineProblems);
  await p.goto(url);
  await p.waitForFunction(() => /carries no data/.test(document.getElementById('message').textContent), null, { timeout: 30000 });
  assert.equal(await p.locator('#standalone').isHidden(), true);
  await p.locator('#file-input').setInputFiles(DEMO);
  await datasetShown(p);
  assert.equal(await computeSmallFtle(p, 40, 16), 'done', await p.locator('#message').textContent());
  assert.match(await p.locator('#field-map').getAttribute('aria-label'), /^FTLE σ/);
  await p.screenshot({ path: join(ARTIFACTS, 'standalone-ftle.png'), fullPage: true });
  const others = requests.filter((u) => u !== url && !u.startsWith('data:') && !u.startsWith('blob:'));
  t.diagnostic(`requests seen: ${requests.length} (the file itself, data: and blob: URLs)`);
  assert.deepEqual(others, [], 'requests other than the file itself, data: and blob: URLs');
  await offline.close();
  assert.deepEqual(offlineProblems, []);
});

test('a single file with a reduced model inside opens it by itself, still with no request', async (t) => {
  const model = join(scratch, 'reduced.npz');
  await page.getByLabel('POD modes kept').fill('2');
  await downloadOf(page, page.getByRole('button', { name: 'Share a reduced model' }), model, 60000);
  const file = join(scratch, 'sillage-with-model.html');
  execFileSync('python3', [join(ROOT, 'www', 'build-single.py'), '--out', file, '--data', model], { stdio: 'pipe' });
  t.diagnostic(`reduced model (2 modes): ${(statSync(model).size / 1e3).toFixed(0)} kB; single file with it: ${(statSync(file).size / 1e6).toFixed(2)} MB`);
  const url = pathToFileURL(file).href;
  const offline = await browser.newContext({ viewport: { width: 1280, height: 1000 } });
  const p = await offline.newPage();
  const requests = [];
  offline.on('request', (r) => requests.push(r.url()));
  const offlineProblems = [];
  watchProblems(p, offlineProblems);
  await p.goto(url);
  await p.waitForFunction(() => /reduced model/.test(document.getElementById('summary').textContent), null, { timeout: 30000 });
  await p.screenshot({ path: join(ARTIFACTS, 'standalone-reduced-model.png'), fullPage: true });
  assert.deepEqual(requests.filter((u) => u !== url && !u.startsWith('data:') && !u.startsWith('blob:')), []);
  await offline.close();
  assert.deepEqual(offlineProblems, []);
});

test('no request went to any other host, and the page logged no errors', () => {
  assert.deepEqual(foreignRequests(proxy), [], 'requests that reached the proxy');
  assert.deepEqual(problems, []);
});
