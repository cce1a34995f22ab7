// The memory estimate before reading files: the demo's estimate is shown; a dropped .npy
// whose header declares 5000 × 2000 × 2000 float32 vectors (the data themselves truncated:
// only the header is read) is refused with the reason and the limit, and the demo stays
// loaded; `?memlimit=MB` (a limit set by hand) refuses the demo itself, which exercises the
// reading of an .npz's zip directory and deflated array headers in the page.
//
// Needs www/pkg (bash www/build.sh).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startDemoSite, foreignRequests, watchProblems, datasetShown } from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');

let site;
let proxy;
let server;
let browser;
const problems = [];

/** An .npy header (format 1.0) for float32 data of `shape`, followed by a few bytes only. */
function truncatedNpy(shape) {
  let dict = `{'descr': '<f4', 'fortran_order': False, 'shape': (${shape.join(', ')}), }`;
  while ((10 + dict.length + 1) % 64 !== 0) dict += ' ';
  dict += '\n';
  const head = Buffer.alloc(10);
  head.write('\x93NUMPY', 0, 'latin1');
  head[6] = 1;
  head[7] = 0;
  head.writeUInt16LE(dict.length, 8);
  return Buffer.concat([head, Buffer.from(dict, 'latin1'), Buffer.alloc(64)]);
}

const summaryValue = (page, key) => page.locator(`#summary dd[data-key="${key}"]`).textContent();

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  site = await startDemoSite(ROOT);
  ({ proxy, server, browser } = site);
});

after(async () => {
  await site?.close();
});

test('the estimate is shown; a file declaring a huge series is refused and the demo stays', async () => {
  const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
  const estimate = await page.locator('#load-estimate').textContent();
  assert.match(estimate, /^Memory: about \d+ MB in this tab \(240 snapshots of 100 × 40 vectors; 6\.\d MB of files\)$/);
  const gridBefore = await summaryValue(page, 'grid');
  const sourceBefore = await summaryValue(page, 'source');

  const bytes = truncatedNpy([5000, 2000, 2000]).toString('base64');
  await page.evaluate((b64) => {
    const data = new DataTransfer();
    data.items.add(new File([Uint8Array.from(atob(b64), (c) => c.charCodeAt(0))], 'u.npy'));
    for (const type of ['dragenter', 'dragover', 'drop']) {
      document.body.dispatchEvent(new DragEvent(type, { dataTransfer: data, bubbles: true, cancelable: true }));
    }
  }, bytes);
  const alert = page.getByRole('alert');
  await alert.waitFor({ timeout: 10000 });
  const text = await alert.textContent();
  assert.match(text, /^Could not open u\.npy: these data \(5,000 snapshots of 2,000 × 2,000 vectors\) would need about [\d.]+ [GT]B in the page's core at once, more than the limit of \S+ GB \(.*4 GiB a WebAssembly core can address/, text);
  assert.equal(await page.evaluate(() => document.body.dataset.load), 'refused');
  // Nothing was read: the demo is still the dataset, with its estimate.
  assert.equal(await summaryValue(page, 'grid'), gridBefore);
  assert.equal(await summaryValue(page, 'source'), sourceBefore);
  assert.equal(await page.locator('#load-estimate').textContent(), estimate);
  assert.equal(await page.evaluate(() => window.sillagePage.transport()), null);
  await page.close();
});

test('a limit set in the address (?memlimit=MB) refuses the demo with that limit', async () => {
  const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  watchProblems(page, problems);
  await page.goto(`${server.url}?memlimit=20`);
  const alert = page.getByRole('alert');
  await alert.waitFor({ timeout: 20000 });
  const text = await alert.textContent();
  assert.match(text, /^Could not open the demo field: these data \(240 snapshots of 100 × 40 vectors\) would need about \d+ MB in the page's core at once, more than the limit of 20 MB \(the limit set for this page\)/, text);
  assert.equal(await page.locator('#summary dd[data-key="grid"]').count(), 0, 'nothing was loaded');
  await page.close();
});

test('no request left the machine, and the page logged no errors', () => {
  assert.deepEqual(foreignRequests(proxy), []);
  assert.deepEqual(problems, []);
});
