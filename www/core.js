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
};

let loading = null;

/** Loads and instantiates the module once; resolves to the API above. */
export function loadCore() {
  loading ??= init().then(() => api);
  return loading;
}
