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
  free() { this.#inner.free(); }
}

const api = {
  /**
   * Reads a series from files: [{name, bytes: Uint8Array}]. Options (strings, '' or 'auto'
   * = as the files say): lengthUnit, timeUnit, dt.
   */
  openDataset(files, options = {}) {
    const names = files.map((f) => f.name);
    const inner = call(() => new wasm.Dataset(
      names,
      files.map((f) => f.bytes),
      options.lengthUnit,
      options.timeUnit,
      options.dt,
    ));
    return new Dataset(inner, names);
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
  /** The compiled module, for workers to instantiate (set by loadCore). */
  module: null,
};

let loading = null;

const WASM_URL = new URL('./pkg/sillage_bg.wasm', import.meta.url);

/** Compiles the module once (streaming when the server sends application/wasm). */
async function compile() {
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
