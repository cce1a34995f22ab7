// The worker pool when its workers cannot start: the worker script is answered 404 (a
// route of the browser context), and the pool must give up after a bounded number of
// attempts with a readable error instead of restarting the workers forever.
//
// Needs www/pkg (bash www/build.sh).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startRecordingProxy } from './lib/proxy.mjs';
import { startPageServer } from './lib/server.mjs';
import { launchBrowser, datasetShown } from './lib/launch.mjs';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const WORKERS = 2;
const MAX_START_ATTEMPTS = 3; // www/compute/pool.js

let proxy;
let server;
let browser;

before(async () => {
  proxy = await startRecordingProxy();
  server = await startPageServer(ROOT, ['--demo-dir', join(ROOT, 'demo-fields')]);
  browser = await launchBrowser(proxy.port);
});

after(async () => {
  await browser?.close();
  await server?.close();
  await proxy?.close();
});

test('workers whose script does not load are given up after a few attempts', async () => {
  const context = await browser.newContext();
  let loads = 0;
  await context.route(/\/compute\/worker\.js(\?.*)?$/, (route) => {
    loads += 1;
    return route.fulfill({ status: 404, contentType: 'text/plain', body: 'not here' });
  });
  const page = await context.newPage();
  await page.goto(`${server.url}?workers=${WORKERS}`);
  await datasetShown(page);
  const outcome = await page.evaluate(() => window.sillagePage.runJob('ftle'));
  assert.match(outcome, /^JobFailed: The compute workers could not be started \(3 attempts\): the worker script could not be loaded/);
  // The page says so when a computation is asked for.
  await page.getByRole('button', { name: 'Compute FTLE' }).click();
  await page.waitForFunction(() => document.body.dataset.run === 'failed', null, { timeout: 30000 });
  assert.match(await page.locator('#message').textContent(),
    /Could not compute the FTLE: The compute workers could not be started .*reload the page/);
  // No more attempts after giving up.
  const seen = loads;
  await page.waitForTimeout(1500);
  assert.equal(loads, seen, 'the pool kept starting workers after giving up');
  assert.ok(loads > 0 && loads <= WORKERS * MAX_START_ATTEMPTS, `${loads} loads of worker.js`);
  await context.close();
});
