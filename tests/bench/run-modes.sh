#!/usr/bin/env bash
# POD benchmark: sillage native (one core), sillage compiled to WebAssembly and run in Node
# (one core), numpy's thin SVD and numpy's snapshot method (eigh of YᵀY; OpenBLAS pinned to
# one thread), on the same two problems in one run, as one table (BENCHMARKS.md, "Modes").
#
# Problems: the leading 20 POD modes (whole call: weighted fluctuation matrix, mean removal,
# decomposition, modes) of demo-fields/fin-wake.npz and of the synthetic 200×100-point ×
# 1000-snapshot set of crate/examples/modes_bench.rs. The native run writes the synthetic
# set as an .npz that numpy reads, and the wasm module builds it with the same Rust code, so
# all sides decompose the same numbers; the leading singular values are compared below.
#
# Environment: REPEATS (timed runs per entry on the demo, best kept; default 5),
# SYNTH_REPEATS (on the synthetic set; default 3), SVD_REPEATS (numpy's thin SVD of the
# synthetic set, the slowest entry; default 1), SOLVERS (native and wasm, comma-separated:
# snapshot, direct, randomized_q1, randomized_q2; default snapshot), PYTHON (default
# tests/.venv/bin/python). Wall-clock times depend on what else the machine runs: record
# the load (printed below) with the numbers.
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
cd "$root"
data=${DATA:-$root/demo-fields/fin-wake.npz}
repeats=${REPEATS:-5}
synth_repeats=${SYNTH_REPEATS:-3}
svd_repeats=${SVD_REPEATS:-1}
solvers=${SOLVERS:-snapshot}
python=${PYTHON:-$root/tests/.venv/bin/python}
say() { printf 'run-modes: %s\n' "$*" >&2; }

if [ ! -f "$data" ]; then
  echo "run-modes: no data file $data (generate the demo data or set DATA)" >&2
  exit 1
fi
target_dir=$(cargo metadata --format-version 1 --no-deps |
  python3 -c 'import json, sys; print(json.load(sys.stdin)["target_directory"])')
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT

say "building the native harness and the wasm32 module (release)"
cargo rustc -q -p sillage --release --example modes_bench --crate-type bin
cargo rustc -q -p sillage --release --example modes_bench \
  --target wasm32-unknown-unknown --no-default-features
native="$target_dir/release/examples/modes_bench"
wasm="$target_dir/wasm32-unknown-unknown/release/examples/modes_bench.wasm"

say "machine: $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg) before the runs"
uptime >"$out/load_before"

say "native, one thread"
"$native" "$data" "$repeats" --solvers "$solvers" >"$out/native.jsonl"
"$native" synthetic "$synth_repeats" --solvers "$solvers" \
  --write-synthetic "$out/synthetic.npz" >>"$out/native.jsonl"

say "wasm in Node, one thread"
node tests/bench/modes_wasm.mjs "$wasm" "$data" "$repeats" "$solvers" >"$out/wasm.jsonl"
node tests/bench/modes_wasm.mjs "$wasm" synthetic "$synth_repeats" "$solvers" >>"$out/wasm.jsonl"

say "numpy, OpenBLAS pinned to one thread (the thin SVD of the synthetic set takes a while)"
pin=(env -u OPENBLAS_CORETYPE OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 MKL_NUM_THREADS=1)
"${pin[@]}" "$python" tests/python/bench_modes_numpy.py --only demo --demo "$data" \
  --repeats "$repeats" --json >"$out/numpy.jsonl"
"${pin[@]}" "$python" tests/python/bench_modes_numpy.py --only synthetic \
  --synthetic "$out/synthetic.npz" --repeats "$synth_repeats" --svd-repeats "$svd_repeats" \
  --json >>"$out/numpy.jsonl"
uptime >"$out/load_after"

python3 - "$out" <<'PY'
import json, pathlib, sys

out = pathlib.Path(sys.argv[1])
def lines(name):
    return [json.loads(l) for l in (out / name).read_text().splitlines() if l.strip()]
native = {(r["data"], r["solver"]): r for r in lines("native.jsonl")}
wasm = {(r["data"], r["solver"]): r for r in lines("wasm.jsonl")}
numpy = {(r["data"], r["method"]): r for r in lines("numpy.jsonl")}
datasets = list(dict.fromkeys(d for d, _ in numpy))
solvers = list(dict.fromkeys(s for _, s in native))

def rel(a, b):
    return max(abs(x - y) / abs(y) for x, y in zip(a, b))

print(f"{'data':24} {'what':34} {'runs':>4} {'best s':>8} {'median s':>9} "
      f"{'/ np svd':>8} {'/ np snap':>9}")
verdicts = []
for d in datasets:
    svd, snap = numpy[(d, "svd")], numpy[(d, "snapshot")]
    rows = []
    for s in solvers:
        rows.append((f"sillage native, {s}", native[(d, s)]))
        rows.append((f"sillage wasm (Node), {s}", wasm[(d, s)]))
    rows += [("numpy thin SVD", svd), ("numpy snapshot method (eigh)", snap)]
    for what, r in rows:
        print(f"{d:24} {what:34} {r['runs']:>4} {r['best_s']:>8.3f} {r['median_s']:>9.3f} "
              f"{r['best_s'] / svd['best_s']:>8.2f} {r['best_s'] / snap['best_s']:>9.2f}")
    ref = svd["singular_values"]
    checks = [(f"native {s}", native[(d, s)]) for s in solvers] + \
             [(f"wasm {s}", wasm[(d, s)]) for s in solvers] + [("numpy snapshot", snap)]
    print(f"{'':24} same problem: leading 20 singular values vs numpy's SVD, max relative "
          "difference: " + ", ".join(f"{k} {rel(r['singular_values'], ref):.1e}"
                                     for k, r in checks))
    if "snapshot" in solvers:
        nat, wsm = native[(d, "snapshot")]["best_s"], wasm[(d, "snapshot")]["best_s"]
        for label, np_best in (("numpy svd", svd["best_s"]), ("numpy snapshot", snap["best_s"])):
            verdicts.append(f"{d}: native faster than {label}: {nat:.3f} vs {np_best:.3f} s "
                            f"({np_best / nat:.2f}x) -> {'met' if nat < np_best else 'missed'}")
            verdicts.append(f"{d}: wasm within 2x of {label}: {wsm / np_best:.2f}x -> "
                            f"{'met' if wsm <= 2 * np_best else 'missed'}")
    print()
for v in verdicts:
    print(v)
w = next(iter(wasm.values()))
print("runtime:", w.get("runtime"))
print("load before:", (out / "load_before").read_text().strip())
print("load after: ", (out / "load_after").read_text().strip())
PY
