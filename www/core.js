// The Rust core compiled to WebAssembly (www/pkg, built by build.sh). Every number the page
// shows is computed and formatted here; this module only converts arguments, parses the
// JSON the core returns and turns failures into two kinds of Error:
//   CoreError — the core refused the input (its message says what and where);
//   CorePanic — the core hit an internal error; the module may be unusable until reload.
import init, * as wasm from './pkg/sillage.js';

export class CoreError extends Error {
  constructor(message) {
    super(message);
    this.name = 'CoreError';
  }
}

export class CorePanic extends Error {
  constructor(message) {
    super(message);
    this.name = 'CorePanic';
  }
}

/** Runs a core call, translating a trap into CorePanic and any thrown value into CoreError. */
function call(fn) {
  try {
    return fn();
  } catch (e) {
    if (e instanceof WebAssembly.RuntimeError) {
      throw new CorePanic(wasm.takePanicMessage() ?? e.message);
    }
    throw new CoreError(e instanceof Error ? e.message : String(e));
  }
}

/** A loaded series. Call free() when it is replaced, to return its memory to the core. */
class Dataset {
  #inner;
  constructor(inner, names) {
    this.#inner = inner;
    this.names = names;
    this.nx = inner.nx;
    this.ny = inner.ny;
    this.nt = inner.nt;
    this.lengthUnit = inner.lengthUnit;
  }
  /** [x_min, x_max, y_min, y_max] of the drawn picture. */
  extent() { return Array.from(call(() => this.#inner.extent())); }
  /** [{key, label, value}] */
  summary() { return JSON.parse(call(() => this.#inner.summary())); }
  timeLabel(k) { return call(() => this.#inner.timeLabel(k)); }
  snapshotLabel(k) { return call(() => this.#inner.snapshotLabel(k)); }
  unit(quantity) { return call(() => this.#inner.unit(quantity)); }
  /** [lo, hi] for scope 'series' or 'snapshot'. */
  defaultRange(quantity, k, scope) {
    return Array.from(call(() => this.#inner.defaultRange(quantity, k, scope)));
  }
  /**
   * RGBA bytes, nx × ny, top row first. Optional: a colour map name (default: the field's
   * own) and the no-data colour as 4 RGBA bytes (default: the core's neutral grey).
   */
  render(quantity, k, lo, hi, colormap, mask) {
    return call(() => this.#inner.render(quantity, k, lo, hi, colormap, mask));
  }
  // --- transport -----------------------------------------------------------------------
  /** The series as canonical .npz bytes (Uint8Array), for the compute workers. */
  canonicalNpz() { return call(() => this.#inner.canonicalNpz()); }
  /** {settings, basis, period, notes} derived from the data. */
  transportDefaults() { return JSON.parse(call(() => this.#inner.transportDefaults())); }
  /** [{level: 'note'|'caution'|'refuse', code, text}] for settings (an object). */
  transportWarnings(settings) {
    return JSON.parse(call(() => this.#inner.transportWarnings(JSON.stringify(settings))));
  }
  /** {nx, ny, x: [start, step], y, extent} of the tracer grid of settings. */
  tracerGrid(settings) { return JSON.parse(call(() => this.#inner.tracerGrid(JSON.stringify(settings)))); }
  /** {ridges: [[x0, y0, x1, y1, …]], lengths} of an assembled FTLE map. */
  ftleRidges(settings, ftle, flag) {
    return JSON.parse(call(() => this.#inner.ftleRidges(JSON.stringify(settings), ftle, flag)));
  }
  transportUnit(id) { return call(() => this.#inner.transportUnit(id)); }
  /** Float32Array [x, y, dx, dy, …] of snapshot k, about `across` arrows along the longer side. */
  velocityArrows(k, across) { return call(() => this.#inner.velocityArrows(k, across)); }
  /** Field `name` of snapshot k, Float32Array (ny, nx). */
  field(name, k) { return call(() => this.#inner.field(name, k)); }
  /** Uint8Array (ny, nx), 1 where a cell never has data. */
  mask() { return call(() => this.#inner.mask()); }
  /** [x0, dx, y0, dy] of the data grid. */
  grid() { return Array.from(call(() => this.#inner.grid())); }
  get timeUnit() { return this.#inner.timeUnit; }
  // --- cleaning, modes, sensitivity (views/clean_panel.js, modes_panel.js, sensitivity_panel.js)
  get velocityUnit() { return this.#inner.velocityUnit; }
  /** Missing vectors over all snapshots (modes need none: clean first). */
  get gapCount() { return this.#inner.gapCount; }
  /**
   * Cleans a copy as `sillage clean` does (ε null = automatic, in the velocity unit).
   * Returns {dataset: the cleaned Dataset, report: {outliers, gaps, …, text, warning}}.
   */
  clean(threshold, epsilon, passes) {
    const c = call(() => this.#inner.clean(threshold, epsilon ?? undefined, passes));
    try {
      return { dataset: new Dataset(call(() => c.takeDataset()), this.names), report: JSON.parse(c.report()) };
    } finally {
      c.free();
    }
  }
  /**
   * ε of a cleaning with these options (ε null = automatic, resolved on the whole series), in
   * the velocity unit; throws the core's reason for options it refuses. Workers cleaning
   * ranges of snapshots all get this value (`cleanSnapshots` there).
   */
  cleanEpsilon(threshold, epsilon, passes) {
    return call(() => this.#inner.cleanEpsilon(threshold, epsilon ?? undefined, passes));
  }
  /** The report {outliers, gaps, …, text, warning} of a cleaning from its ranges' reports, in order. */
  cleanSummary(reports) { return JSON.parse(call(() => this.#inner.cleanSummary(JSON.stringify(reports)))); }
  /**
   * This series with the velocities and gap flags of a cleaning done in compute workers
   * (`cleanSnapshots` there, ranges joined): u, v Float32Array, gaps Uint8Array (empty or
   * all zero: none). A new Dataset.
   */
  withVelocity(u, v, gaps) {
    return new Dataset(call(() => this.#inner.withVelocity(u, v, gaps)), this.names);
  }
  /** A decomposition computed by a compute worker (`decomposeBytes` there), from its bytes. */
  modesFromBytes(bytes) { return new Modes(call(() => this.#inner.modesFromBytes(bytes))); }
  /** The selection `text` materialized on this series, as canonical .npz bytes. */
  selectionNpz(text) { return call(() => this.#inner.selectionNpz(text)); }
  sensitivityUnit(id) { return call(() => this.#inner.sensitivityUnit(id)); }
  /** A decomposition ({method: 'pod'|'dmd'|'spod', rank?}); call free() on it when done. */
  decompose(request) { return new Modes(call(() => this.#inner.decompose(JSON.stringify(request)))); }
  /** The wasm object, for core calls that take several datasets. */
  static innerOf(dataset) { return dataset.#inner; }
  // --- export ----------------------------------------------------------------------------
  /** Field `quantity` of snapshot k as file bytes (Uint8Array); format npy, npz, csv or vti. */
  exportField(quantity, k, format) { return call(() => this.#inner.exportField(quantity, k, format)); }
  /** A computed map (`ftle`, `exit_time`) of a run with `settings` (an object) as file bytes. */
  exportTransport(id, settings, values, flags, format) {
    return call(() => this.#inner.exportTransport(id, JSON.stringify(settings), values, flags, format));
  }
  /** Sensitivity map `id` of a run (transport settings as JSON text) as file bytes. */
  exportSensitivity(id, settingsJson, values, flags, format) {
    return call(() => this.#inner.exportSensitivity(id, settingsJson, values, flags, format));
  }
  /**
   * Every map of a sensitivity run as .npz bytes in the `sillage sensitivity --out` layout:
   * the run's settings JSON text, the g_ref it used and its arrays {name: TypedArray}.
   */
  sensitivityNpz(jobJson, gRef, arrays) {
    return call(() => this.#inner.sensitivityNpz(jobJson, gRef, arrays));
  }
  /** A reduced model of the series (mean + the first k POD modes), as .npz bytes. */
  reducedModelNpz(k) { return call(() => this.#inner.reducedModelNpz(k)); }
  free() { this.#inner.free(); }
}

/** A POD, DMD or SPOD of one series (crate/src/modes/overview.rs). */
class Modes {
  #inner;
  constructor(inner) {
    this.#inner = inner;
    this.count = inner.count;
  }
  /** {method, count, pick_word, text, charts: [chart], pod} */
  overview() { return JSON.parse(call(() => this.#inner.overview())); }
  /** Mode k (0-based) as Float32Array (ny, nx) of 'u', 'v' or 'magnitude'. */
  shape(k, component) { return call(() => this.#inner.shape(k, component)); }
  shapeRange(k, component) { return Array.from(call(() => this.#inner.shapeRange(k, component))); }
  shapeColormap(component) { return call(() => this.#inner.shapeColormap(component)); }
  shapeImage(k, component, lo, hi) { return call(() => this.#inner.shapeImage(k, component, lo, hi)); }
  /** The chart of mode k's temporal coefficients, or null (SPOD). */
  coefficients(k) {
    const text = call(() => this.#inner.coefficients(k));
    return text === undefined ? null : JSON.parse(text);
  }
  /** Mode k's component as file bytes (npy, npz, csv, vti), unit-norm values. */
  exportShape(k, component, format) { return call(() => this.#inner.exportShape(k, component, format)); }
  term(k) { return call(() => this.#inner.term(k)); }
  describe(k) { return call(() => this.#inner.describe(k)); }
  free() { this.#inner.free(); }
}

const api = {
  /**
   * Reads a series from files: [{name, bytes: Uint8Array}]. Options (strings, '' or 'auto'
   * = as the files say): lengthUnit, timeUnit, dt.
   */
  openDataset(files, options = {}) {
    const names = files.map((f) => f.name);
    if (files.length === 1 && call(() => wasm.isReducedModel(files[0].bytes))) {
      // A reduced model (mean + POD modes, written by "Share a reduced model"): the flow
      // it stands for, rebuilt by the core; it is in SI units, so the options do not apply.
      return new Dataset(call(() => wasm.Dataset.fromReducedModel(names[0], files[0].bytes)), names);
    }
    const inner = call(() => new wasm.Dataset(
      names,
      files.map((f) => f.bytes),
      options.lengthUnit,
      options.timeUnit,
      options.dt,
    ));
    return new Dataset(inner, names);
  },
  /**
   * The memory estimate before reading files (crate/src/memory.rs): `files` [{name, size}],
   * `pieces` [{file, offset, bytes: Uint8Array}] read so far, `hints` {device_memory_gib?,
   * heap_limit?, limit?, workers}. Returns {need: [{file, offset, length}], estimate}.
   */
  memoryEstimate(files, pieces, hints) {
    return JSON.parse(call(() => wasm.memoryEstimate(
      files.map((f) => f.name),
      Float64Array.from(files, (f) => f.size),
      Uint32Array.from(pieces, (p) => p.file),
      Float64Array.from(pieces, (p) => p.offset),
      pieces.map((p) => p.bytes),
      JSON.stringify(hints),
    )));
  },
  /** [{id, label, signed, colormap}] in menu order. */
  quantities() { return JSON.parse(call(() => wasm.quantities())); },
  /** 256 × RGBA bytes, low end first. */
  colormapRgba(name) { return call(() => wasm.colormapRgba(name)); },
  /** RGBA of the no-data grey. */
  maskColor() { return call(() => wasm.maskColor()); },
  /** {ticks: [{value, frac, label}], exponent, scale} */
  ticks(lo, hi, target) { return JSON.parse(call(() => wasm.ticks(lo, hi, target))); },
  formatNumber(value, digits) { return call(() => wasm.formatNumber(value, digits)); },
  /** [{id, label, colormap}] of the maps a transport run produces. */
  transportMaps() { return JSON.parse(call(() => wasm.transportMaps())); },
  transportRange(id, values, flags, horizon) {
    return Array.from(call(() => wasm.transportRange(id, values, flags, horizon)));
  },
  transportImage(id, values, flags, nx, ny, lo, hi) {
    return call(() => wasm.transportImage(id, values, flags, nx, ny, lo, hi));
  },
  transportRunWarnings(flags) { return JSON.parse(call(() => wasm.transportRunWarnings(flags))); },
  // --- cleaning and sensitivity ---------------------------------------------------------
  /** {threshold, passes} of the cleaning step (ε automatic). */
  cleanDefaults() { return JSON.parse(call(() => wasm.cleanDefaults())); },
  /** [{id, label, colormap, normalised, range_note}] of the sensitivity maps. */
  sensitivityMaps() { return JSON.parse(call(() => wasm.sensitivityMaps())); },
  sensitivityNormalisation() { return call(() => wasm.sensitivityNormalisation()); },
  /** {warnings, g_ref, g_ref_text} before a run on (f, g); job = {transport, epsilon?, g_ref?}. */
  sensitivityCheck(data, f, g, job) {
    return JSON.parse(call(() => wasm.sensitivityCheck(Dataset.innerOf(data), Dataset.innerOf(f),
      Dataset.innerOf(g), JSON.stringify(job))));
  },
  sensitivityRange(id, values, flags) { return Array.from(call(() => wasm.sensitivityRange(id, values, flags))); },
  sensitivityImage(id, values, flags, nx, ny, lo, hi) {
    return call(() => wasm.sensitivityImage(id, values, flags, nx, ny, lo, hi));
  },
  sensitivityRunWarnings(flags, msG) { return JSON.parse(call(() => wasm.sensitivityRunWarnings(flags, msG))); },
  /** {nodes, pearson, pearson_abs, spearman_abs} of ζ against Δσ. */
  sensitivityAgreement(zeta, delta, flags) {
    return JSON.parse(call(() => wasm.sensitivityAgreement(zeta, delta, flags)));
  },
  // --- the analysis recipe (crate/src/recipe) ------------------------------------------------
  /** Checks a recipe (JSON text); returns it in the core's layout (pretty JSON text). */
  recipeNormalize(text) { return call(() => wasm.recipeNormalize(text)); },
  /** An empty recipe (format, version, defaults) as JSON text. */
  recipeEmpty() { return call(() => wasm.recipeEmpty()); },
  /** The reading step for the reading options (as openDataset takes them), an object. */
  recipeReading(options = {}) {
    return JSON.parse(call(() => wasm.recipeReading(options.lengthUnit, options.timeUnit, options.dt)));
  },
  /** The text after `#recipe=` of a share link for a recipe (JSON text). */
  recipeToFragment(text) { return call(() => wasm.recipeToFragment(text)); },
  /** The recipe (pretty JSON text) carried by a share link's fragment. */
  recipeFromFragment(fragment) { return call(() => wasm.recipeFromFragment(fragment)); },
  /** The compiled module, for workers to instantiate (set by loadCore). */
  module: null,
};

let loading = null;

/**
 * What the single-file build (www/build-single.py) embeds in the page, or null when the
 * page is served: {wasm: Uint8Array, workerUrl, ...}. Set before this module runs.
 */
export const embedded = globalThis.sillageEmbedded ?? null;

/**
 * Compiles the module once (streaming when the server sends application/wasm); the
 * single-file page compiles the bytes it carries instead (it cannot fetch anything).
 */
async function compile() {
  if (embedded?.wasm) return WebAssembly.compile(embedded.wasm);
  const WASM_URL = new URL('./pkg/sillage_bg.wasm', import.meta.url);
  try {
    return await WebAssembly.compileStreaming(fetch(WASM_URL));
  } catch {
    const response = await fetch(WASM_URL);
    if (!response.ok) throw new Error(`${WASM_URL.pathname}: HTTP ${response.status}`);
    return WebAssembly.compile(await response.arrayBuffer());
  }
}

/**
 * Compiles and instantiates the module once; resolves to the API above. The compiled
 * module is kept in `api.module` so the compute workers instantiate it without compiling.
 */
export function loadCore() {
  loading ??= compile().then(async (module) => {
    await init({ module_or_path: module });
    api.module = module;
    return api;
  });
  return loading;
}
