// The worker pool: one worker per core, each with its own instance of the core and its own
// copy of the dataset. A job (a kind, its settings and a number of rows) is split into row
// chunks, more chunks than workers so the load balances and progress moves; the chunks'
// arrays are copied into place here (no numerics: rows are put where they belong).
//
// Workers start from Blob URLs: a worker started from a same-origin script URL is not
// covered by the page's <meta> Content-Security-Policy, one started from a blob: URL
// inherits it (see DESIGN.md, "Known pitfalls"), so the workers cannot reach other hosts
// either, wherever the page is served from.

/** The run was cancelled by the user. */
export class JobCancelled extends Error {
  constructor() {
    super('cancelled');
    this.name = 'JobCancelled';
  }
}

/** A chunk failed inside the core; `panic` when the core trapped (an internal error). */
export class JobFailed extends Error {
  constructor(message, panic) {
    super(message);
    this.name = 'JobFailed';
    this.panic = panic;
  }
}

/**
 * The single-file page (www/build-single.py) carries the worker as one classic script:
 * opened from file://, Chromium starts no module worker from a blob: URL.
 */
const EMBEDDED_SOURCE = globalThis.sillageEmbedded?.workerSource ?? null;
const WORKER_TYPE = EMBEDDED_SOURCE ? 'classic' : 'module';

function blobWorkerUrl() {
  const source = EMBEDDED_SOURCE
    ?? `import ${JSON.stringify(new URL('./worker.js', import.meta.url).href)};\n`;
  return URL.createObjectURL(new Blob([source], { type: 'text/javascript' }));
}

/**
 * Starts of one worker slot that may fail in a row (the script does not load, the core does
 * not start) before the pool gives up instead of restarting it again and again.
 */
export const MAX_START_ATTEMPTS = 3;

/** Rows per chunk: about four chunks per worker, at most 16 rows, at least 1. */
export function chunkRows(rows, workers) {
  return Math.max(1, Math.min(16, Math.ceil(rows / (4 * workers))));
}

/**
 * Creates a pool of `size` workers (default: navigator.hardwareConcurrency, at least 1)
 * running the compiled core `module` (a WebAssembly.Module). When a worker fails to start
 * MAX_START_ATTEMPTS times in a row, the pool stops all workers, rejects the running job and
 * every later one with JobFailed, and calls `onGiveUp(message)` once.
 */
export function createPool({ module, size, onGiveUp }) {
  const count = Math.max(1, Math.floor(size ?? navigator.hardwareConcurrency ?? 1) || 1);
  const url = blobWorkerUrl();
  let data = null; // {id, bytes: Uint8Array}
  let slots = [];
  let current = null; // the running job
  let nextJobId = 1;
  let broken = null; // the reason, once the pool gave up on starting workers

  function post(slot, message, transfer = []) {
    slot.worker.postMessage(message, transfer);
  }

  function sendDataset(slot) {
    if (!data) return;
    const copy = data.bytes.slice();
    post(slot, { type: 'dataset', datasetId: data.id, bytes: copy.buffer }, [copy.buffer]);
  }

  // Extra series for jobs that need more than the dataset (sensitivity: the model flow f
  // and the perturbation g), tagged so a job names the set it was planned with.
  let auxiliary = null; // {tag, entries: {name: Uint8Array}}

  function sendAuxiliary(slot) {
    if (!auxiliary) return;
    const names = Object.keys(auxiliary.entries);
    const buffers = names.map((n) => auxiliary.entries[n].slice().buffer);
    post(slot, { type: 'auxiliary', tag: auxiliary.tag, names, buffers }, buffers);
  }

  /** Starts a worker; `attempt` counts the starts of this slot since its worker last came up. */
  function spawn(attempt = 1) {
    const slot = {
      worker: new Worker(url, { type: WORKER_TYPE, name: 'sillage-compute' }),
      chunk: null,
      fatal: null,
      ready: false,
      attempt,
    };
    slot.worker.onmessage = (event) => onMessage(slot, event.data);
    slot.worker.onerror = (event) => {
      event.preventDefault();
      onBroken(slot, slot.ready
        ? `a compute worker stopped: ${event.message || 'script error'}`
        : `the worker script could not be loaded, or stopped while starting (${event.message || 'the browser gives no details'})`);
    };
    post(slot, { type: 'init', module });
    sendDataset(slot);
    sendAuxiliary(slot);
    return slot;
  }

  /** Stops every worker for good: they cannot start (see MAX_START_ATTEMPTS). */
  function giveUp(reason) {
    broken = `The compute workers could not be started (${MAX_START_ATTEMPTS} attempts): `
      + `${reason}. Computations need them; reload the page to try again.`;
    for (const s of slots) s.worker.terminate();
    slots = [];
    const job = current;
    if (job) finish(job, new JobFailed(broken, false));
    onGiveUp?.(broken);
  }

  /** Replaces a slot's worker; returns false when the pool gave up instead. */
  function replace(slot, reason) {
    slot.worker.terminate();
    const i = slots.indexOf(slot);
    if (i < 0) return false;
    const attempt = slot.ready ? 1 : slot.attempt + 1;
    if (attempt > MAX_START_ATTEMPTS) {
      giveUp(reason);
      return false;
    }
    slots[i] = spawn(attempt);
    return true;
  }

  function onBroken(slot, message) {
    if (broken) return;
    const job = current;
    const chunk = slot.chunk;
    const started = slot.ready;
    if (!replace(slot, message)) return;
    if (!job || chunk === null) return;
    if (started) {
      finish(job, new JobFailed(message, true));
    } else {
      // The worker never came up: its chunk goes to the fresh one (which gets the job after
      // its own init and data, in order).
      job.retry.push(chunk);
      dispatch(slots.find((s) => s.chunk === null && !s.ready) ?? slots[0], job);
    }
  }

  function onMessage(slot, m) {
    if (broken) return;
    if (m.type === 'ready') {
      slot.ready = true;
      slot.attempt = 1;
      return;
    }
    if (m.type === 'fatal') {
      slot.fatal = m.message;
      if (!slot.ready) {
        onBroken(slot, m.message); // the core did not start in it: try a fresh worker
      } else if (current && slot.chunk !== null) {
        onBroken(slot, m.message);
      }
      return;
    }
    const job = current;
    if (!job || m.jobId !== job.id) return; // a late answer to a finished or failed job
    if (m.type === 'progress') {
      // Part of a running chunk (a long single core call): counted as that share of its rows.
      const [j0, j1] = job.chunks[m.chunk];
      job.partRows[m.chunk] = m.fraction * (j1 - j0);
      report(job);
      return;
    }
    slot.chunk = null;
    if (m.type === 'failed') {
      if (m.panic) replace(slot, m.message);
      finish(job, new JobFailed(m.message, m.panic));
      return;
    }
    // Put the rows in place (a job of one chunk keeps its arrays as they came: no copy).
    for (const [name, part] of Object.entries(m.arrays)) {
      if (job.chunks.length === 1) {
        job.arrays[name] = part;
        continue;
      }
      const width = part.length / (m.j1 - m.j0);
      job.arrays[name] ??= new part.constructor(job.rows * width);
      job.arrays[name].set(part, m.j0 * width);
    }
    job.info[m.chunk] = m.info; // in chunk order, whatever order the chunks end in
    job.doneRows += m.j1 - m.j0;
    job.doneChunks += 1;
    delete job.partRows[m.chunk];
    report(job);
    if (job.doneChunks === job.chunks.length) {
      finish(job, null);
      return;
    }
    dispatch(slot, job);
  }

  /**
   * Calls the job's onProgress with the rows done, counting the reported part of chunks in
   * flight; the time left is the elapsed time scaled by the part still to do.
   */
  function report(job) {
    const done = job.doneRows + Object.values(job.partRows).reduce((a, b) => a + b, 0);
    const elapsed = (performance.now() - job.start) / 1000;
    job.onProgress?.({
      done,
      total: job.rows,
      fraction: done / job.rows,
      elapsed,
      remaining: done > 0 ? elapsed * (job.rows - done) / done : Infinity,
    });
  }

  function dispatch(slot, job) {
    if (current !== job || slot.chunk !== null) return;
    let chunk;
    if (job.retry.length > 0) {
      chunk = job.retry.shift();
    } else {
      if (job.next >= job.chunks.length) return;
      chunk = job.next;
      job.next += 1;
    }
    const [j0, j1] = job.chunks[chunk];
    slot.chunk = chunk;
    // Inputs go with the job, a copy each time (a chunk may be sent again to a fresh worker).
    const names = Object.keys(job.inputs);
    const buffers = names.map((n) => job.inputs[n].slice().buffer);
    post(slot, {
      type: 'job', jobId: job.id, chunk, kind: job.kind, datasetId: data.id, settings: job.settings, j0, j1,
      inputs: { names, buffers },
    }, buffers);
  }

  function finish(job, error) {
    if (current !== job) return;
    current = null;
    for (const slot of slots) slot.chunk = null;
    if (error) job.reject(error);
    else job.resolve({ arrays: job.arrays, info: job.info, seconds: (performance.now() - job.start) / 1000 });
  }

  slots = Array.from({ length: count }, spawn);

  return {
    size: count,
    /** Hands a dataset (canonical .npz bytes) to every worker; `id` tags the jobs for it. */
    setDataset(id, bytes) {
      data = { id, bytes };
      for (const slot of slots) sendDataset(slot);
    },
    /**
     * Hands extra series to every worker: `entries` {name: canonical .npz bytes}, `tag` a
     * number the job's settings repeat (the worker checks it). Replaces the previous set.
     */
    setAuxiliary(tag, entries) {
      auxiliary = { tag, entries };
      for (const slot of slots) sendAuxiliary(slot);
    },
    get busy() { return current !== null; },
    /** The reason the pool stopped for good (workers that cannot start), or null. */
    get broken() { return broken; },
    /**
     * Runs job `kind` with `settings` (a JSON string) over `rows` rows. Resolves to
     * {arrays: {name: TypedArray (rows × width)}, info: [per-chunk info, in chunk order],
     * seconds}; rejects with JobCancelled or JobFailed. `onProgress({done, total, fraction,
     * elapsed, remaining})` follows each chunk, and each progress report of a chunk in
     * flight (a job kind whose one core call reports, e.g. modes). One job at a time.
     * `inputs` ({name: canonical .npz bytes}) are series the job reads instead of, or
     * besides, the dataset (e.g. the series as read when the workers hold a cleaned copy);
     * every chunk carries its own copy.
     */
    run({ kind, settings, rows, onProgress, inputs = {} }) {
      if (broken) return Promise.reject(new JobFailed(broken, false));
      if (current) return Promise.reject(new Error('a computation is already running'));
      if (!data) return Promise.reject(new Error('no dataset is loaded'));
      const step = chunkRows(rows, count);
      const chunks = [];
      for (let j = 0; j < rows; j += step) chunks.push([j, Math.min(rows, j + step)]);
      return new Promise((resolve, reject) => {
        const job = {
          id: nextJobId++, kind, settings, rows, chunks, inputs, next: 0, doneRows: 0, doneChunks: 0,
          partRows: {}, arrays: {}, info: [], retry: [], start: performance.now(), onProgress, resolve, reject,
        };
        current = job;
        for (const slot of slots) dispatch(slot, job);
      });
    },
    /** Stops the running job at once: its workers are ended and fresh ones started. */
    cancel() {
      const job = current;
      if (!job) return;
      current = null;
      slots = slots.map((slot) => {
        if (slot.chunk === null) return slot;
        slot.worker.terminate();
        return spawn();
      });
      job.reject(new JobCancelled());
    },
    /** Ends every worker. */
    close() {
      for (const slot of slots) slot.worker.terminate();
      slots = [];
      URL.revokeObjectURL(url);
    },
  };
}
