#!/usr/bin/env bash
# Tracer-transport benchmark: sillage native (one core and all cores), sillage compiled to
# WebAssembly and run in Node (one core), and the numpy/scipy script a researcher would
# write (one core), on one problem, in one run, as one table (BENCHMARKS.md, "Transport").
#
# Problem: demo-fields/fin-wake.npz, 256x128 tracers over the data window, t0 = 2 s,
# horizon 1 s forward, RK4 with a fixed step of 0.005 s, bilinear in space, linear in time,
# tracers stop at the window edge and the fin. Rates are tracer-steps per second (one RK4
# step of one tracer); each side counts the steps it actually took. The verdict against
# numpy compares the time to solve the problem (sillage's steps include the bisection that
# places each exit, which the numpy script does not do).
#
# Environment: DATA (another .npz), REPEATS (timed runs per entry and round, best kept;
# default 5), ROUNDS (turns of native, wasm and numpy, one numpy run each; default 3),
# SKIP_CRITERION=1 (leave out the criterion bench, which takes a few minutes), PYTHON
# (default tests/.venv/bin/python). Wall-clock rates depend on what else the machine runs:
# record the load (printed below) with the numbers.
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
cd "$root"
data=${DATA:-$root/demo-fields/fin-wake.npz}
repeats=${REPEATS:-5}
rounds=${ROUNDS:-3}
python=${PYTHON:-$root/tests/.venv/bin/python}
problem=(256 128 2 1 0.005)
say() { printf 'run-transport: %s\n' "$*" >&2; }

if [ ! -f "$data" ]; then
  echo "run-transport: no data file $data (generate the demo data or set DATA)" >&2
  exit 1
fi
target_dir=$(cargo metadata --format-version 1 --no-deps |
  python3 -c 'import json, sys; print(json.load(sys.stdin)["target_directory"])')
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT

say "building the native harness and the wasm32 module (release)"
cargo build -q -p sillage --release --example transport_bench
cargo rustc -q -p sillage --release --example transport_wasm \
  --target wasm32-unknown-unknown --no-default-features
wasm="$target_dir/wasm32-unknown-unknown/release/examples/transport_wasm.wasm"

say "machine: $(nproc) cores, load average $(cut -d' ' -f1-3 /proc/loadavg) before the runs"
uptime >"$out/load_before"

# The sides take turns, ROUNDS times (native, wasm, numpy; best of all rounds kept per
# side): this virtual machine runs everything a third faster or slower for minutes at a
# time, and sides timed one after the other would each meet a different phase.
for round in $(seq 1 "$rounds"); do
  say "round $round of $rounds: native, one thread ($repeats runs each)"
  "$target_dir/release/examples/transport_bench" "$data" "${problem[@]}" "$repeats" \
    --positions "$out/positions.npz" >>"$out/native.jsonl"
  say "round $round of $rounds: wasm in Node, one thread ($repeats runs each)"
  node tests/bench/transport_wasm.mjs "$wasm" "$data" "${problem[@]}" "$repeats" >>"$out/wasm.jsonl"
  say "round $round of $rounds: numpy/scipy, threads pinned to one (1 run each)"
  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 \
    MKL_NUM_THREADS=1 "$python" tests/bench/transport_numpy.py --data "$data" \
    --grid "${problem[0]}x${problem[1]}" --t0 "${problem[2]}" --horizon "${problem[3]}" \
    --step "${problem[4]}" --repeats 1 --check "$out/positions.npz" >>"$out/numpy.jsonl"
done

if [ "${SKIP_CRITERION:-0}" != 1 ]; then
  say "criterion: serial and rayon (a few minutes)"
  SILLAGE_BENCH_DATA="$data" cargo bench -q -p sillage --bench transport -- --noplot \
    >"$out/criterion.txt" 2>&1 || { cat "$out/criterion.txt" >&2; exit 1; }
fi
uptime >"$out/load_after"

python3 - "$out" "$target_dir/criterion" "${SKIP_CRITERION:-0}" <<'PY'
import json, pathlib, sys

out, crit_dir, skip = pathlib.Path(sys.argv[1]), pathlib.Path(sys.argv[2]), sys.argv[3] == "1"
def lines(name):
    return [json.loads(l) for l in (out / name).read_text().splitlines() if l.strip()]
def best(rows, key):
    """The fastest row per `key` over all rounds."""
    out = {}
    for r in rows:
        k = r[key]
        if k not in out or r["steps_per_s"] > out[k]["steps_per_s"]:
            out[k] = r
    return out
native = best(lines("native.jsonl"), "kind")
wasm = best(lines("wasm.jsonl"), "kind")
numpy = list(best(lines("numpy.jsonl"), "method").values())
rows = []  # (what, threads, tracer-steps per run, seconds, rate)
for kind, label in [("flow_map", "flow map"), ("ftle_variational", "variational FTLE")]:
    rows.append((f"sillage native, {label}", "1", native[kind]["tracer_steps"],
                 native[kind]["best_s"], native[kind]["steps_per_s"]))
    rows.append((f"sillage wasm (Node), {label}", "1", wasm[kind]["tracer_steps"],
                 wasm[kind]["best_s"], wasm[kind]["steps_per_s"]))
crit = {}
if not skip:
    for est in sorted(crit_dir.glob("*/*/256x128/new/estimates.json"),
                      key=lambda e: (e.parts[-5], e.parts[-4] != "serial")):
        group, bench = est.parts[-5], est.parts[-4]
        meta = json.loads((est.parent / "benchmark.json").read_text())
        steps = meta["throughput"]["Elements"]
        secs = json.loads(est.read_text())["median"]["point_estimate"] * 1e-9
        label = {"flow_map": "flow map", "flow_map_per_tracer": "flow map, per-tracer path",
                 "ftle_variational": "variational FTLE"}.get(group, group)
        threads = "1" if bench == "serial" else bench.split("_")[1]
        crit[(group, bench)] = steps / secs
        rows.append((f"sillage criterion median, {label}", threads, steps, secs, steps / secs))
for r in numpy:
    rows.append((f"numpy/scipy {r['method']}, flow map", "1", r["tracer_steps"], r["best_s"],
                 r["steps_per_s"]))

ref = native["flow_map"]["steps_per_s"]
print(f"{'':44} {'threads':>7} {'steps/run':>10} {'time s':>8} {'Msteps/s':>9} {'vs native':>9}")
for what, th, steps, secs, rate in rows:
    print(f"{what:44} {th:>7} {steps:>10} {secs:>8.3f} {rate / 1e6:>9.2f} {rate / ref:>9.2f}")

best_np = max(numpy, key=lambda r: r["steps_per_s"])
ck = best_np.get("check_max_position_difference")
print()
print(f"same problem: numpy and sillage final positions of tracers complete in both "
      f"({best_np.get('check_both_complete')}) differ by at most {ck:.2e} (length units); "
      f"stop status agrees for {100 * best_np.get('check_status_agree', 0):.2f} % of tracers")
print(f"same code: wasm and native checksums {wasm['flow_map']['checksum']!r} / "
      f"{native['flow_map']['checksum']!r} (flow map)")
nat, wsm = native["flow_map"]["steps_per_s"], wasm["flow_map"]["steps_per_s"]
print(f"target native >= 20 M tracer-steps/s on one core: {nat / 1e6:.1f} M -> "
      f"{'met' if nat >= 20e6 else 'missed'}")
print(f"target wasm within 1.5x of native: {nat / wsm:.2f}x -> "
      f"{'met' if nat / wsm <= 1.5 else 'missed'}")
# The same problem on both sides: compare the time to solve it. (Rates would flatter
# sillage: its tracer-steps include the bisection steps that place each exit, work the
# numpy script does not do.)
nat_s = native["flow_map"]["best_s"]
sp = best_np["best_s"] / nat_s
rate_sp = nat / best_np["steps_per_s"]
print(f"target >= 15x the numpy/scipy script ({best_np['method']}), one core each: "
      f"{best_np['best_s']:.3f} s / {nat_s:.3f} s = {sp:.1f}x faster on the same problem "
      f"({rate_sp:.1f}x in tracer-steps/s) -> {'met' if sp >= 15 else 'missed'}")
if crit:
    par = [v for (g, b), v in crit.items() if g == "flow_map" and b != "serial"]
    ser = crit.get(("flow_map", "serial"))
    if par and ser:
        print(f"rayon speed-up of the flow map on all cores: {par[0] / ser:.2f}x")
fv = native["ftle_variational"]
print(f"variational FTLE cost: {1e9 * fv['best_s'] / fv['tracer_steps']:.0f} ns per tracer-step "
      f"on one core ({fv['best_s'] / native['flow_map']['best_s'] * native['flow_map']['tracer_steps'] / fv['tracer_steps']:.2f}x a flow-map step)")
print("load before:", (out / "load_before").read_text().strip())
print("load after: ", (out / "load_after").read_text().strip())
PY
