// One compute worker: its own instance of the core, its own copy of the dataset, and a
// table of job kinds. Holds no numerics: every job is one core call on a row range.
//
// Messages in (handled strictly in order):
//   {type: 'init', module}                     compiled WebAssembly.Module of the core
//   {type: 'dataset', datasetId, bytes}        canonical .npz bytes (ArrayBuffer, transferred)
//   {type: 'auxiliary', tag, names, buffers}  extra series (canonical .npz bytes, transferred)
//   {type: 'job', jobId, chunk, kind, datasetId, settings, j0, j1, inputs: {names, buffers}}
//                                              inputs: series for this job only (.npz bytes)
// Messages out:
//   {type: 'ready'}                                  the core started (after 'init')
//   {type: 'progress', jobId, chunk, fraction}       part of a chunk done (jobs that report it)
//   {type: 'result', jobId, chunk, j0, j1, arrays: {name: TypedArray}, info}  (buffers transferred)
//   {type: 'failed', jobId, chunk, message, panic}   panic = the core trapped; this worker is spent
//   {type: 'fatal', message}                         init or dataset failed
import init, * as wasm from '../pkg/sillage.js';

/**
 * Job kinds: name → (dataset, settings JSON, j0, j1, aux, inputs, report) → {arrays, info}.
 * Each returns named typed arrays holding rows j0..j1 of its maps, row-major; the pool puts
 * them in place. A new kind is one more entry calling its core function. `inputs` holds the
 * job's own series by name (wasm Datasets, freed after the job); `report(fraction)` tells
 * the pool how much of a long single core call is done (the core calls it).
 */
const JOBS = {
  /**
   * Cleaning of snapshots j0..j1 (the rows of this job are snapshots): settings {threshold,
   * epsilon, passes}, ε resolved on the whole series by the page (so ranges join into the
   * cleaning of the whole series); numbers or the texts 'NaN', 'Infinity', '-Infinity'
   * (JSON has no such numbers; the core names the problem). Cleans the input 'series' when
   * given (the series as read), else the dataset.
   */
  clean(dataset, settings, j0, j1, _aux, inputs) {
    const s = JSON.parse(settings, (_key, value) => (NON_FINITE.includes(value) ? Number(value) : value));
    const source = inputs.series ?? dataset;
    const r = source.cleanSnapshots(s.threshold, s.epsilon, s.passes, j0, j1);
    return { arrays: { u: r.u, v: r.v, gaps: r.gaps }, info: JSON.parse(r.report) };
  },
  /**
   * POD, DMD or SPOD of the dataset (one row); settings {method, rank?}; the bytes of it.
   * One core call, which reports its progress as it goes.
   */
  modes(dataset, settings, _j0, _j1, _aux, _inputs, report) {
    return { arrays: { modes: dataset.decomposeBytes(settings, report) }, info: null };
  },
  ftle(dataset, settings, j0, j1) {
    const r = dataset.ftleRows(settings, j0, j1);
    return { arrays: { ftle: r.ftle, tau: r.tau, flag: r.flag }, info: JSON.parse(r.info) };
  },
  /**
   * Sensitivity of the model flow f to the perturbation g (the auxiliary series 'f' and
   * 'g'); settings = {aux: tag of the set, core: {transport, epsilon?, g_ref?}}.
   */
  sensitivity(_dataset, settings, j0, j1, aux) {
    const s = JSON.parse(settings);
    if (aux.tag !== s.aux || !aux.sets.f || !aux.sets.g) {
      throw new Error('the worker does not hold the model flow and perturbation of this job');
    }
    const r = wasm.sensitivityRows(aux.sets.f, aux.sets.g, JSON.stringify(s.core), j0, j1);
    const arrays = {};
    for (const [name, value] of Object.entries(r)) if (name !== 'info') arrays[name] = value;
    return { arrays, info: JSON.parse(r.info) };
  },
  /** Panics inside the core on purpose (tests of the error path). */
  self_test_panic() {
    wasm.selfTestPanic();
    return { arrays: {}, info: null };
  },
};

/** How settings write numbers JSON cannot hold. */
const NON_FINITE = ['NaN', 'Infinity', '-Infinity'];

let dataset = null;
let datasetId = null;
/** Extra series by name ({tag, sets: {name: wasm.Dataset}}), for jobs that need them. */
const aux = { tag: null, sets: {} };
let spent = false;

function describe(error) {
  if (error instanceof WebAssembly.RuntimeError) {
    spent = true;
    return { message: wasm.takePanicMessage?.() ?? error.message, panic: true };
  }
  return { message: error instanceof Error ? error.message : String(error), panic: false };
}

async function handle(m) {
  switch (m.type) {
    case 'init':
      try {
        await init({ module_or_path: m.module });
        self.postMessage({ type: 'ready' });
      } catch (error) {
        self.postMessage({ type: 'fatal', message: `the core could not start in a worker: ${describe(error).message}` });
      }
      return;
    case 'dataset':
      try {
        dataset?.free();
        dataset = null;
        dataset = new wasm.Dataset(['series.npz'], [new Uint8Array(m.bytes)]);
        datasetId = m.datasetId;
      } catch (error) {
        self.postMessage({ type: 'fatal', message: `a worker could not read the dataset: ${describe(error).message}` });
      }
      return;
    case 'auxiliary':
      try {
        for (const d of Object.values(aux.sets)) d.free();
        aux.sets = {};
        aux.tag = null;
        m.names.forEach((name, i) => {
          aux.sets[name] = new wasm.Dataset([`${name}.npz`], [new Uint8Array(m.buffers[i])]);
        });
        aux.tag = m.tag;
      } catch (error) {
        self.postMessage({ type: 'fatal', message: `a worker could not read the series '${m.names.join(', ')}': ${describe(error).message}` });
      }
      return;
    case 'job': {
      const { jobId, chunk, kind, settings, j0, j1 } = m;
      const fail = (message, panic = false) => self.postMessage({ type: 'failed', jobId, chunk, message, panic });
      if (spent) return fail('this worker stopped after an internal error', true);
      const run = JOBS[kind];
      if (!run) return fail(`unknown job kind '${kind}'`);
      if (!dataset || datasetId !== m.datasetId) return fail('the worker does not hold the dataset of this job');
      const inputs = {};
      try {
        (m.inputs?.names ?? []).forEach((name, i) => {
          inputs[name] = new wasm.Dataset([`${name}.npz`], [new Uint8Array(m.inputs.buffers[i])]);
        });
        const report = (fraction) => self.postMessage({ type: 'progress', jobId, chunk, fraction });
        const { arrays, info } = run(dataset, settings, j0, j1, aux, inputs, report);
        const buffers = Object.values(arrays).map((a) => a.buffer);
        self.postMessage({ type: 'result', jobId, chunk, j0, j1, arrays, info }, buffers);
      } catch (error) {
        const d = describe(error);
        fail(d.message, d.panic);
      } finally {
        if (!spent) for (const d of Object.values(inputs)) d.free();
      }
      return;
    }
    default:
      self.postMessage({ type: 'fatal', message: `unknown message '${m.type}'` });
  }
}

let queue = Promise.resolve();
self.onmessage = (event) => {
  queue = queue.then(() => handle(event.data));
};
