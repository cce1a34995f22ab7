// Times sillage's tracer transport compiled to WebAssembly, in Node, on one thread.
//
// The module is crate/examples/transport_bench.rs built as a cdylib for wasm32 (simd128, as
// the page's build) by tests/bench/run-transport.sh; it exports plain C-ABI functions, so
// it is loaded with Node's WebAssembly API directly, without JavaScript glue. The
// library's own wasm-bindgen exports come along in the module; their imports are stubbed
// with functions that throw, since the benchmark never calls them.
//
// Usage: node tests/bench/transport_wasm.mjs MODULE.wasm DATA.npz NX NY T0 HORIZON STEP REPEATS
// Prints one JSON line per kind (flow map, variational FTLE): tracer-steps per run, the
// best and median wall time over REPEATS runs after one warm-up run, and a checksum of the
// result to compare with the native run of the same example.

import { readFileSync } from "node:fs";
import { performance } from "node:perf_hooks";

const [wasmPath, dataPath, ...rest] = process.argv.slice(2);
if (!wasmPath || rest.length !== 6) {
  console.error(
    "usage: node transport_wasm.mjs MODULE.wasm DATA.npz NX NY T0 HORIZON STEP REPEATS",
  );
  process.exit(2);
}
const [nx, ny, t0, horizon, step, repeats] = rest.map(Number);

const module = await WebAssembly.compile(readFileSync(wasmPath));
const imports = {};
for (const imp of WebAssembly.Module.imports(module)) {
  if (imp.kind !== "function") {
    throw new Error(`unexpected ${imp.kind} import ${imp.module}.${imp.name}`);
  }
  imports[imp.module] ??= {};
  imports[imp.module][imp.name] = () => {
    throw new Error(`the benchmark does not provide ${imp.module}.${imp.name}`);
  };
}
const { exports: w } = await WebAssembly.instantiate(module, imports);

function message(len) {
  const ptr = w.bench_message();
  return new TextDecoder().decode(new Uint8Array(w.memory.buffer, ptr, len));
}

const data = readFileSync(dataPath);
const ptr = w.bench_alloc(data.length);
new Uint8Array(w.memory.buffer, ptr, data.length).set(data);
const err = w.bench_load(ptr, data.length);
if (err !== 0) {
  throw new Error(`cannot read ${dataPath}: ${message(err)}`);
}

function time(kind, run) {
  const steps = run(); // warm-up: compiles the hot code and fills the caches
  if (steps < 0) {
    throw new Error(`${kind} failed`);
  }
  const times = [];
  for (let r = 0; r < Math.max(1, repeats); r++) {
    const start = performance.now();
    const again = run();
    times.push((performance.now() - start) / 1000);
    if (again !== steps) {
      throw new Error(`${kind}: ${again} tracer-steps, then ${steps}`);
    }
  }
  times.sort((a, b) => a - b);
  const best = times[0];
  console.log(
    JSON.stringify({
      kind,
      tracer_steps: steps,
      best_s: best,
      median_s: times[Math.floor(times.length / 2)],
      runs: times.length,
      steps_per_s: steps / best,
      checksum: w.bench_checksum(),
      runtime: `node ${process.versions.node} (V8 ${process.versions.v8})`,
    }),
  );
}

time("flow_map", () => w.bench_flow_map(nx, ny, t0, horizon, step));
time("ftle_variational", () => w.bench_ftle(nx, ny, t0, horizon, step));
