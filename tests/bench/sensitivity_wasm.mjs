// Cost of the sensitivity maps against the FTLE alone, in WebAssembly under Node, one
// thread, through the page's own bindings (www/pkg, built by www/build.sh): the same
// problem as crate/benches/sensitivity.rs — the demo wake as f, its POD modes 3–4 as g,
// a 128×64 tracer grid, t0 = 2 s, horizon 1 s, RK4 step 0.005 s, bilinear/linear, stop at
// the edge. Prints best and median of REPEATS runs (after one warm-up) and the ratios.
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
const settings = JSON.stringify(transport);
const job = JSON.stringify({ transport });
const ny = transport.grid[1];

function time(run) {
  run();
  const t = [];
  for (let r = 0; r < repeats; r++) {
    const s = performance.now();
    run();
    t.push(performance.now() - s);
  }
  t.sort((a, b) => a - b);
  return { best: t[0], median: t[Math.floor(t.length / 2)] };
}

const rows = {
  ftle_variational: time(() => f.ftleRows(JSON.stringify({ ...transport, route: 'variational' }), 0, ny)),
  ftle_tracer_grid: time(() => f.ftleRows(JSON.stringify({ ...transport, route: 'tracer_grid' }), 0, ny)),
  sensitivity: time(() => wasm.sensitivityRows(f, g, job, 0, ny)),
};
console.log('wasm (Node), 128x64 tracers, 200 RK4 steps, one thread');
console.log('kind               best ms   median ms');
for (const [k, v] of Object.entries(rows)) {
  console.log(`${k.padEnd(18)} ${v.best.toFixed(1).padStart(8)} ${v.median.toFixed(1).padStart(10)}`);
}
const s = rows.sensitivity.best;
console.log(`sensitivity / FTLE variational: ${(s / rows.ftle_variational.best).toFixed(2)}x; `
  + `/ FTLE tracer-grid: ${(s / rows.ftle_tracer_grid.best).toFixed(2)}x`);
void settings;
