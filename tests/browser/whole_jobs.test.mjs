// Cleaning and modes run in a compute worker (job kinds 'clean' and 'modes'): their results
// equal, bit for bit, what the page's own core computes on the main thread from the same
// file (the route the page took before), a modes run shows its progress and time left, and
// a cancelled run keeps the earlier result.
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
let page;
const problems = [];

const settled = (key, timeout = 60000) => page.waitForFunction(
  (k) => ['done', 'failed', 'cancelled'].includes(document.body.dataset[k]), key, { timeout },
).then(() => page.evaluate((k) => document.body.dataset[k], key));

/**
 * In the page: the demo read again and cleaned with the defaults by the page's core on the
 * main thread, then `method` decomposed there; returns whether the working series (cleaned
 * in a worker) has the same canonical bytes, and both overviews as JSON text.
 */
function mainThreadReference(method, rank) {
  return page.evaluate(async ([m, r]) => {
    const { loadCore } = await import('./core.js');
    const core = await loadCore();
    const bytes = new Uint8Array(await (await fetch('demo/fin-wake.npz')).arrayBuffer());
    const data = core.openDataset([{ name: 'fin-wake.npz', bytes }]);
    const d = core.cleanDefaults();
    const { dataset, report } = data.clean(d.threshold, null, d.passes);
    const mine = dataset.canonicalNpz();
    const theirs = window.sillageAnalysis.workingNpz();
    const sameSeries = mine.length === theirs.length && mine.every((b, i) => b === theirs[i]);
    const modes = dataset.decompose(r ? { method: m, rank: r } : { method: m });
    const reference = JSON.stringify(modes.overview());
    modes.free();
    dataset.free();
    data.free();
    return {
      sameSeries,
      sameReport: document.getElementById('clean-report').textContent === `Cleaned: ${report.text}`,
      reference,
      page: JSON.stringify(window.sillageAnalysis.modes()),
    };
  }, [method, rank]);
}

async function computeModes(method, rank = '') {
  await page.getByLabel('Method').selectOption(method);
  await page.getByLabel('Rank').fill(rank);
  await page.evaluate(() => { document.body.dataset.modes = ''; });
  await page.getByRole('button', { name: 'Compute modes' }).click();
  assert.equal(await settled('modes'), 'done', await page.locator('#modes-warnings').textContent());
}

before(async () => {
  assert.ok(existsSync(join(ROOT, 'www', 'pkg', 'sillage.js')),
    'www/pkg is missing: run `bash www/build.sh` first');
  site = await startDemoSite(ROOT);
  ({ proxy, server, browser } = site);
  page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
  watchProblems(page, problems);
  await page.goto(server.url);
  await datasetShown(page);
  await page.waitForFunction(() => !document.getElementById('clean-run').disabled, null, { timeout: 30000 });
});

after(async () => {
  await site?.close();
});

test('cleaning and POD/DMD in workers equal the main thread\'s, bit for bit', async () => {
  await page.getByRole('button', { name: 'Clean', exact: true }).click();
  assert.equal(await settled('clean'), 'done', await page.locator('#message').textContent());
  assert.match(await page.locator('#clean-report').textContent(), /^Cleaned: /);
  await computeModes('pod');
  let r = await mainThreadReference('pod');
  assert.ok(r.sameSeries, 'the series cleaned in a worker differs from the main thread\'s');
  assert.ok(r.sameReport, 'the cleaning report differs');
  assert.equal(r.page, r.reference, 'POD overview');
  await computeModes('dmd', '12');
  r = await mainThreadReference('dmd', 12);
  assert.equal(r.page, r.reference, 'DMD overview');
});

test('a modes run reports its progress: the share done and the time left, rising', async () => {
  // Every text the progress line shows during a POD of all modes (one core call in a
  // worker, which reports as it goes; the line itself appears after 0.3 s, its text is
  // kept up to date from the start).
  await page.evaluate(() => {
    const text = document.getElementById('modes-progress-text');
    window.modesProgressTexts = [];
    new MutationObserver(() => window.modesProgressTexts.push(text.textContent))
      .observe(text, { childList: true, characterData: true, subtree: true });
  });
  await computeModes('pod');
  const texts = await page.evaluate(() => window.modesProgressTexts);
  const shares = texts
    .map((t) => /^Computing the POD… ([\d.]+) %, about ([\d.]+) s left$/.exec(t))
    .filter(Boolean)
    .map((m) => Number(m[1]));
  assert.ok(shares.length >= 5, `too few progress reports: ${JSON.stringify(texts)}`);
  assert.ok(shares.every((f, i) => i === 0 || f >= shares[i - 1]), `not rising: ${shares}`);
  assert.ok(shares[0] < 50 && shares.at(-1) === 100, `from ${shares[0]} % to ${shares.at(-1)} %`);
});

test('a cancelled modes run or cleaning keeps the earlier result', async () => {
  const before = await page.evaluate(() => JSON.stringify(window.sillageAnalysis.modes()));
  await page.getByLabel('Method').selectOption('pod');
  await page.getByLabel('Rank').fill('');
  await page.evaluate(() => {
    document.getElementById('modes-form').requestSubmit();
    document.getElementById('modes-cancel').click();
  });
  assert.equal(await settled('modes'), 'cancelled');
  assert.equal(await page.evaluate(() => JSON.stringify(window.sillageAnalysis.modes())), before);
  assert.equal(await page.locator('#modes-progress').isHidden(), true);

  const series = await page.evaluate(() => window.sillageAnalysis.workingNpz().length);
  await page.evaluate(() => {
    document.getElementById('clean-form').requestSubmit();
    document.getElementById('clean-cancel').click();
  });
  assert.equal(await settled('clean'), 'cancelled');
  assert.equal(await page.evaluate(() => window.sillageAnalysis.rawKept()), true);
  assert.equal(await page.evaluate(() => window.sillageAnalysis.workingNpz().length), series);
  // The pool works again after the cancel: clean once more, from the series as read (sent
  // with the job, since the workers hold the cleaned copy): the same series again.
  await page.evaluate(() => { document.body.dataset.clean = ''; });
  await page.getByRole('button', { name: 'Clean', exact: true }).click();
  assert.equal(await settled('clean'), 'done');
  const r = await mainThreadReference('pod');
  assert.ok(r.sameSeries && r.sameReport, 'cleaning the series as read again');
});

test('no request left the machine, and the page logged no errors', () => {
  assert.deepEqual(foreignRequests(proxy), []);
  assert.deepEqual(problems, []);
});
