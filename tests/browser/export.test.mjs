// Exports of the page: the PNG picture of the map (with its colour bar) and the map's
// numbers written by the core (.npz equal to the page's FTLE, .csv with units in the
// header), all as downloads; no request to any other host (recording proxy).
//
// Needs www/pkg (bash www/build.sh). Screenshots and the exported files go to tests/artifacts/.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { npzArrays, npzShapes } from './lib/npz.mjs';
import { startRecordingProxy } from './lib/proxy.mjs';
import { startPageServer } from './lib/server.mjs';
import {
  launchBrowser, foreignRequests, watchProblems, downloadOf, datasetShown, computeSmallFtle,
} from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const ARTIFACTS = join(ROOT, 'tests', 'artifacts');

let proxy;
let server;
let browser;
let page;
const problems = [];

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')), 'www/pkg is missing: run `bash www/build.sh` first');
  mkdirSync(ARTIFACTS, { recursive: true });
  proxy = await startRecordingProxy();
  server = await startPageServer(ROOT, ['--demo-dir', join(ROOT, 'demo-fields')]);
  browser = await launchBrowser(proxy.port);
  const context = await browser.newContext({ viewport: { width: 1280, height: 1000 }, acceptDownloads: true });
  page = await context.newPage();
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
});

after(async () => {
  await browser?.close();
  await server?.close();
  await proxy?.close();
});

/** {distinct colours, non-white pixels} of a PNG file, overall and in columns [x0, x1). */
async function pngStats(path, x0, x1) {
  const b64 = readFileSync(path).toString('base64');
  return page.evaluate(async ({ b64: data, x0: a, x1: b }) => {
    const img = new Image();
    img.src = `data:image/png;base64,${data}`;
    await img.decode();
    const c = document.createElement('canvas');
    c.width = img.width;
    c.height = img.height;
    const ctx = c.getContext('2d');
    ctx.drawImage(img, 0, 0);
    const d = ctx.getImageData(0, 0, c.width, c.height).data;
    const seen = new Set();
    let inked = 0;
    let barInked = 0;
    for (let i = 0; i < d.length; i += 4) {
      const x = (i / 4) % c.width;
      const rgb = (d[i] << 16) | (d[i + 1] << 8) | d[i + 2];
      seen.add(rgb);
      if (rgb !== 0xffffff) {
        inked += 1;
        if (x >= a && x < b) barInked += 1;
      }
    }
    return { width: c.width, height: c.height, distinct: seen.size, inked, barInked };
  }, { b64, x0, x1 });
}

test('the PNG export holds the map, its colour bar and a line of labels', async () => {
  await page.getByLabel('Field', { exact: true }).selectOption('vorticity');
  await page.waitForFunction(() => document.getElementById('field-map').getAttribute('aria-label')?.startsWith('vorticity'));
  const path = join(ARTIFACTS, 'export-vorticity.png');
  const name = await downloadOf(page, page.getByRole('button', { name: 'Save picture (PNG)' }), path);
  assert.match(name, /^sillage-vorticity-0000\.png$/);
  const png = readFileSync(path);
  assert.equal(png.toString('latin1', 1, 4), 'PNG');
  const sizes = await page.evaluate(() => ({
    map: document.getElementById('field-map').width,
    bar: document.getElementById('colorbar').width,
    mapH: document.getElementById('field-map').height,
  }));
  const stats = await pngStats(path, sizes.map, sizes.map + sizes.bar);
  assert.ok(stats.width >= sizes.map + sizes.bar, `picture ${stats.width} px wide`);
  assert.ok(stats.height > sizes.mapH, 'room for the text line under the map');
  assert.ok(stats.distinct > 50, `only ${stats.distinct} distinct colours in the picture`);
  assert.ok(stats.barInked > 500, `colour bar area nearly blank (${stats.barInked} inked pixels)`);
  await page.screenshot({ path: join(ARTIFACTS, 'export-card.png'), fullPage: true });
});

test('the .npz export of the FTLE map holds the page\'s numbers, grid and units', async () => {
  assert.equal(await computeSmallFtle(page), 'done', await page.locator('#message').textContent());
  await page.waitForFunction(() => document.getElementById('quantity').value === 'ftle');
  await page.getByLabel('Map data as').selectOption('npz');
  const path = join(ARTIFACTS, 'export-ftle.npz');
  const name = await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), path);
  assert.equal(name, 'sillage-ftle.npz');
  const file = npzArrays(path, ['ftle', 'x', 'y', 'mask', 't']);
  // The unit strings are there (0-d string arrays).
  assert.deepEqual(npzShapes(path, ['unit', 'length_unit', 'time_unit']), { unit: [], length_unit: [], time_unit: [] });
  assert.deepEqual(file.ftle.shape, [20, 48]);
  assert.deepEqual(file.x.shape, [48]);
  assert.deepEqual(file.y.shape, [20]);
  const mine = await page.evaluate(() => {
    const t = window.sillagePage.transport();
    return { ftle: Array.from(t.arrays.ftle), flag: Array.from(t.arrays.flag), grid: t.grid, t0: t.settings.t0 };
  });
  let compared = 0;
  for (let c = 0; c < mine.ftle.length; c += 1) {
    // Status flags above 2 mean "no FTLE value" (crate/src/render/transport.rs).
    if (mine.flag[c] > 2) {
      assert.ok(Number.isNaN(file.ftle.data[c]), `node ${c} has no value but the file says ${file.ftle.data[c]}`);
      assert.equal(file.mask.data[c], 1);
    } else {
      assert.equal(file.ftle.data[c], Math.fround(mine.ftle[c]), `node ${c}`);
      assert.equal(file.mask.data[c], 0);
      compared += 1;
    }
  }
  assert.ok(compared > 0.5 * mine.ftle.length, `${compared} values compared`);
  // Axes: the tracer grid the page drew ([start, step]).
  assert.ok(Math.abs(file.x.data[0] - mine.grid.x[0]) < 1e-12);
  assert.ok(Math.abs(file.x.data[1] - file.x.data[0] - mine.grid.x[1]) < 1e-9);
  assert.ok(Math.abs(file.y.data[0] - mine.grid.y[0]) < 1e-12);
  assert.equal(file.t.data[0], mine.t0);
});

test('the .csv export names the columns with their units; .npy and .vti download too', async () => {
  await page.getByLabel('Map data as').selectOption('csv');
  const csv = join(ARTIFACTS, 'export-ftle.csv');
  await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), csv);
  const lines = readFileSync(csv, 'utf8').trim().split('\n');
  assert.equal(lines[0], 'x [m],y [m],ftle [1/s]');
  assert.equal(lines.length, 1 + 48 * 20);
  for (const format of ['npy', 'vti']) {
    await page.getByLabel('Map data as').selectOption(format);
    const path = join(ARTIFACTS, `export-ftle.${format}`);
    assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), path), `sillage-ftle.${format}`);
    const head = readFileSync(path).toString('latin1', 0, 64);
    assert.ok(format === 'npy' ? head.startsWith('\x93NUMPY') : head.includes('<?xml'), `${format} header`);
  }
  // A field of the series exports as well, at the snapshot shown.
  await page.getByLabel('Field', { exact: true }).selectOption('speed');
  await page.getByLabel('Map data as').selectOption('npz');
  const path = join(ARTIFACTS, 'export-speed.npz');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Save map data' }), path), 'sillage-speed-0000.npz');
  const f = npzArrays(path, ['speed', 'x', 'y']);
  const nx = await page.evaluate(() => document.querySelector('#summary dd[data-key="grid"]').textContent);
  assert.match(nx, new RegExp(`${f.speed.shape[1]}\\s*×\\s*${f.speed.shape[0]}`));
});

test('a reduced model downloads and opens as a dataset on the same grid and times', async () => {
  await page.getByLabel('POD modes kept').fill('3');
  const path = join(ARTIFACTS, 'export-reduced.npz');
  assert.equal(await downloadOf(page, page.getByRole('button', { name: 'Share a reduced model' }), path,
    60000), 'sillage-reduced-3-modes.npz');
  const file = npzArrays(path, ['mean_u', 'mode_u', 'coefficients', 'energy_fraction', 't']);
  assert.deepEqual(file.mode_u.shape, [3, 40, 100]);
  assert.deepEqual(file.coefficients.shape, [240, 3]);
  const size = readFileSync(path).length;
  assert.ok(size < 1.5e6, `reduced model of ${size} bytes`);
  const grid = await page.locator('#summary dd[data-key="grid"]').textContent();
  await page.locator('#file-input').setInputFiles(path);
  await page.waitForFunction(() => /reduced model/.test(document.getElementById('summary').textContent), null, { timeout: 30000 });
  assert.equal(await page.locator('#summary dd[data-key="grid"]').textContent(), grid);
  assert.equal(await page.locator('#snapshot').getAttribute('max'), '239');
  await page.screenshot({ path: join(ARTIFACTS, 'export-reduced-model.png'), fullPage: true });
});

test('no request went to any other host, and the page logged no errors', () => {
  assert.deepEqual(foreignRequests(proxy), [], 'requests that reached the proxy');
  assert.deepEqual(problems, []);
});
