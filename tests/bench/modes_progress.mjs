// How good is the page's time-left estimate for a modal decomposition? Runs the page's own
// core (www/pkg, as a compute worker runs it) in Node on one thread, records every progress
// report of `decomposeBytes` with its time, and compares the estimate the page shows,
// elapsed · (1 − f)/f (www/compute/pool.js), with the time that was actually left, when the
// bar passes 10, 25, 50, 75 and 90 %. Prints one table per method (BENCHMARKS.md, "Modes").
//
// Usage: node tests/bench/modes_progress.mjs DATA.npz [METHODS]
//   (tests/bench/run-modes-progress.sh writes the series of the BENCHMARKS.md record and runs
//   this script on it)
//   METHODS: comma-separated requests as the page sends them, e.g. pod,dmd:20,spod
//   (default pod,dmd:20,spod). Needs www/pkg (bash www/build.sh).

import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const [dataPath, methodsArg = 'pod,dmd:20,spod'] = process.argv.slice(2);
if (!dataPath) {
  console.error('usage: node tests/bench/modes_progress.mjs DATA.npz [METHODS]');
  process.exit(2);
}
const wasm = await import(join(root, 'www', 'pkg', 'sillage.js'));
await wasm.default({ module_or_path: readFileSync(join(root, 'www', 'pkg', 'sillage_bg.wasm')) });
const dataset = new wasm.Dataset([dataPath.split('/').pop()], [new Uint8Array(readFileSync(dataPath))]);

const MARKS = [0.1, 0.25, 0.5, 0.75, 0.9];
for (const spec of methodsArg.split(',')) {
  const [method, rank] = spec.split(':');
  const request = JSON.stringify(rank ? { method, rank: Number(rank) } : { method });
  const reports = [];
  const start = performance.now();
  dataset.decomposeBytes(request, (fraction) => reports.push([(performance.now() - start) / 1000, fraction]));
  const total = (performance.now() - start) / 1000;
  console.log(`\n${request}: ${total.toFixed(2)} s in all, ${reports.length} progress reports`);
  console.log('  bar at   elapsed s   shown left s   actually left s   shown / actual');
  for (const mark of MARKS) {
    const hit = reports.find(([, f]) => f >= mark);
    if (!hit) continue;
    const [elapsed, f] = hit;
    const shown = elapsed * (1 - f) / f;
    const actual = total - elapsed;
    console.log(`  ${(100 * f).toFixed(1).padStart(5)} %  ${elapsed.toFixed(2).padStart(9)}  ${shown.toFixed(2).padStart(13)}  ${actual.toFixed(2).padStart(16)}  ${(shown / actual).toFixed(2).padStart(15)}`);
  }
}
dataset.free();
