// Headless Debian Chromium for the page tests, with the same flags and the
// same excluded browser-background hosts as ftle.test.mjs (see there and DESIGN.md,
// "Known pitfalls"): everything the page asks of the network goes to the recording proxy.
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { startRecordingProxy } from './proxy.mjs';
import { startPageServer } from './server.mjs';

export const BROWSER_BACKGROUND_HOSTS = new Set(['accounts.google.com', 'update.googleapis.com']);
const DISABLED_FEATURES = [
  'AutofillServerCommunication', 'OptimizationHints', 'NetworkTimeServiceQuerying', 'AimEnabled',
  'Translate', 'MediaRouter', 'DialMediaRouteProvider', 'HttpsUpgrades',
];

export function launchBrowser(proxyPort) {
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking',
      '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic',
      `--disable-features=${DISABLED_FEATURES.join(',')}`,
      `--proxy-server=http://127.0.0.1:${proxyPort}`,
    ],
  });
}

/**
 * What most page tests start from: the recording proxy, the page server with the demo data
 * (repository `root`), and Chromium going through the proxy. `close()` stops all three; a
 * failure while starting stops what had started.
 */
export async function startDemoSite(root) {
  const started = [];
  const close = async () => {
    for (const part of started.reverse()) await part.close();
  };
  try {
    const proxy = await startRecordingProxy();
    started.push(proxy);
    const server = await startPageServer(root, ['--demo-dir', join(root, 'demo-fields')]);
    started.push(server);
    const browser = await launchBrowser(proxy.port);
    started.push(browser);
    return { proxy, server, browser, close };
  } catch (error) {
    await close();
    throw error;
  }
}

/** Requests that reached the proxy, without the browser's own background calls. */
export function foreignRequests(proxy) {
  return proxy.log.filter((e) => !BROWSER_BACKGROUND_HOSTS.has(proxy.hostOf(e)));
}

/** Collects page errors and console errors of `page` into `problems`. */
export function watchProblems(page, problems) {
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('console', (m) => {
    if (m.type() === 'error') problems.push(`console error: ${m.text()}`);
  });
}

/** Clicks `locator` and returns the download it starts, saved to `path`. */
export async function downloadOf(page, locator, path, timeout = 15000) {
  const [download] = await Promise.all([page.waitForEvent('download', { timeout }), locator.click()]);
  await download.saveAs(path);
  return download.suggestedFilename();
}

/** Waits until the page has read a dataset (the summary shows its grid). */
export function datasetShown(page, timeout = 30000) {
  return page.locator('#summary dd[data-key="grid"]').waitFor({ timeout });
}

/** Sets a small tracer grid and computes the FTLE; resolves to the run state. */
export async function computeSmallFtle(page, nx = 48, ny = 20) {
  await page.waitForFunction(() => !document.getElementById('compute-ftle').disabled, null, { timeout: 30000 });
  await page.getByLabel('Tracers along x').fill(String(nx));
  await page.getByLabel('Tracers along y').fill(String(ny));
  await page.getByRole('button', { name: 'Compute FTLE' }).click();
  await page.waitForFunction(() => ['done', 'failed', 'cancelled'].includes(document.body.dataset.run),
    null, { timeout: 90000 });
  return page.evaluate(() => document.body.dataset.run);
}
