// Cost of the sensitivity maps against the FTLE alone, in WebAssembly under Node, one
// thread, through the page's own bindings (www/pkg, built by www/build.sh): the same
// problem as crate/benches/sensitivity.rs — the demo wake as f, its POD modes 3–4 as g,
// a 128×64 tracer grid, t0 = 2 s, horizon 1 s, RK4 step 0.005 s, bilinear/linear, stop at
// the edge. Prints best and median of REPEATS rounds (after one warm-up; the kinds take
// turns within a round) and the ratios.
//
// Usage: node tests/bench/sensitivity_wasm.mjs [REPEATS]   (from the repository root)

import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const repeats = Number(process.argv[2] ?? 5);
const wasm = await import(path.join(root, 'www/pkg/sillage.js'));
await wasm.default({ module_or_path: readFileSync(path.join(root, 'www/pkg/sillage_bg.wasm')) });

const demo = readFileSync(path.join(root, 'demo-fields/fin-wake.npz'));
const f = new wasm.Dataset(['fin-wake.npz'], [new Uint8Array(demo)]);
const gBytes = f.selectionNpz('pod(3-4)');
const g = new wasm.Dataset(['g.npz'], [gBytes]);
const transport = { t0: 2.0, horizon: 1.0, grid: [128, 64], step: 0.005 };
const job = JSON.stringify({ transport });
const ny = transport.grid[1];

const kinds = {
  ftle_variational: () => f.ftleRows(JSON.stringify({ ...transport, route: 'variational' }), 0, ny),
  ftle_tracer_grid: () => f.ftleRows(JSON.stringify({ ...transport, route: 'tracer_grid' }), 0, ny),
  sensitivity: () => wasm.sensitivityRows(f, g, job, 0, ny),
};
// The kinds take turns, one run each per round, so that every kind meets the same phases of
// a machine whose speed drifts by a third for minutes at a time; the ratios are also taken
// per round (paired) and their median reported.
const times = Object.fromEntries(Object.keys(kinds).map((k) => [k, []]));
for (const run of Object.values(kinds)) run(); // warm-up
for (let r = 0; r < repeats; r++) {
  for (const [k, run] of Object.entries(kinds)) {
    const s = performance.now();
    run();
    times[k].push(performance.now() - s);
  }
}
const median = (a) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)];
console.log(`wasm (Node), 128x64 tracers, 200 RK4 steps, one thread, ${repeats} rounds`);
console.log('kind               best ms   median ms');
for (const [k, t] of Object.entries(times)) {
  const best = Math.min(...t);
  console.log(`${k.padEnd(18)} ${best.toFixed(1).padStart(8)} ${median(t).toFixed(1).padStart(10)}`);
}
const ratio = (a, b) => times[a].map((t, i) => t / times[b][i]);
const sv = ratio('sensitivity', 'ftle_variational');
const st = ratio('sensitivity', 'ftle_tracer_grid');
console.log(`sensitivity / FTLE variational: ${(Math.min(...times.sensitivity)
  / Math.min(...times.ftle_variational)).toFixed(2)}x best over best, `
  + `${median(sv).toFixed(2)}x median of the rounds' ratios`);
console.log(`sensitivity / FTLE tracer-grid: ${(Math.min(...times.sensitivity)
  / Math.min(...times.ftle_tracer_grid)).toFixed(2)}x best over best, `
  + `${median(st).toFixed(2)}x median of the rounds' ratios`);
