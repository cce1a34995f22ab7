// Times sillage's POD compiled to WebAssembly, in Node, on one thread.
//
// The module is crate/examples/modes_bench.rs built as a cdylib for wasm32 (simd128, as the
// page's build) by tests/bench/run-modes.sh; it exports plain C-ABI functions, so it is
// loaded with Node's WebAssembly API directly, without JavaScript glue (the library's own
// wasm-bindgen imports are stubbed with functions that throw: the benchmark never calls them).
//
// Usage: node tests/bench/modes_wasm.mjs MODULE.wasm (DATA.npz | synthetic) REPEATS [SOLVERS]
//        [--profile]
// SOLVERS: comma-separated, of snapshot, direct, randomized_q1, randomized_q2 (default
// snapshot). `synthetic` generates the 200×100 × 1000 set inside the module with the same
// Rust code as the native run. Prints one JSON line per solver: best and median wall time
// of REPEATS runs after one warm-up run, and the leading singular values.

import { readFileSync } from "node:fs";
import { performance } from "node:perf_hooks";

const SOLVERS = ["snapshot", "direct", "randomized_q1", "randomized_q2"];
const args = process.argv.slice(2);
const profile = args.includes("--profile");
const [wasmPath, dataPath, repeatsArg, solversArg = "snapshot"] = args.filter(
  (a) => a !== "--profile",
);
if (!wasmPath || !dataPath || !repeatsArg) {
  console.error("usage: node modes_wasm.mjs MODULE.wasm (DATA.npz | synthetic) REPEATS [SOLVERS]");
  process.exit(2);
}
const repeats = Math.max(1, Number(repeatsArg));

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
imports.env ??= {};
imports.env.bench_now = () => performance.now(); // the module's clock for bench_profile
const { exports: w } = await WebAssembly.instantiate(module, imports);

function message(len) {
  const ptr = w.bench_message();
  return new TextDecoder().decode(new Uint8Array(w.memory.buffer, ptr, len));
}

let name;
if (dataPath === "synthetic") {
  const start = performance.now();
  w.bench_synthetic(200, 100, 1000);
  name = "synthetic 200x100x1000";
  console.error(`modes_wasm: synthetic set in ${((performance.now() - start) / 1000).toFixed(2)} s`);
} else {
  const data = readFileSync(dataPath);
  const ptr = w.bench_alloc(data.length);
  new Uint8Array(w.memory.buffer, ptr, data.length).set(data);
  const err = w.bench_load(ptr, data.length);
  if (err !== 0) {
    throw new Error(`cannot read ${dataPath}: ${message(err)}`);
  }
  name = "demo";
}

for (const solver of solversArg.split(",")) {
  const code = SOLVERS.indexOf(solver);
  if (code < 0) {
    throw new Error(`no solver '${solver}'`);
  }
  const run = () => {
    const r = w.bench_pod(code);
    if (r < 0) {
      throw new Error(`POD (${solver}) failed: ${message(-r)}`);
    }
    return r;
  };
  const modes = run(); // warm-up: compiles the hot code and grows the memory
  const times = [];
  for (let k = 0; k < repeats; k++) {
    const start = performance.now();
    const again = run();
    times.push((performance.now() - start) / 1000);
    if (again !== modes) {
      throw new Error(`${solver}: ${again} modes, then ${modes}`);
    }
  }
  times.sort((a, b) => a - b);
  const singular = Array.from({ length: modes }, (_, j) => w.bench_singular(j));
  console.log(
    JSON.stringify({
      data: name,
      solver,
      best_s: times[0],
      median_s: times[Math.floor(times.length / 2)],
      runs: times.length,
      singular_values: singular,
      memory_mb: w.memory.buffer.byteLength / 2 ** 20,
      runtime: `node ${process.versions.node} (V8 ${process.versions.v8})`,
    }),
  );
}

if (profile) {
  const names = ["mean_s", "weighted_matrix_s", "gram_lower_s", "self_adjoint_eigen_s",
    "gram_full_s", "svd_snapshot_s", "check"];
  const count = w.bench_profile();
  if (count < 0) {
    throw new Error(`profile failed: ${message(-count)}`);
  }
  console.log(JSON.stringify({ profile: Object.fromEntries(names.map((n, i) => [n, w.bench_phase(i)])) }));
}
