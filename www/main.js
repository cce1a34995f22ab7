// Wires the page: the core, the state, the views and the user's inputs. Holds no numerics:
// ranges, labels, pixels and summaries all come from the core (core.js).
import { loadCore, CorePanic, embedded } from './core.js';
import { createStore } from './state.js';
import { readFiles, setupFileSources } from './io/files.js';
import { bytesSource, deviceHints, estimateMemory, fileSource } from './io/memory.js';
import { onPixelRatioChange } from './views/canvas.js';
import { createFieldMap } from './views/field_map.js';
import { createColorbar } from './views/colorbar.js';
import { createSummary } from './views/summary.js';
import { createTimeControl } from './views/time_control.js';
import { createMessages } from './views/messages.js';
import { createTransportPanel, showWarnings } from './views/transport_panel.js';
import { attachNavigation } from './views/map_navigation.js';
import { createPool, JobCancelled, JobFailed } from './compute/pool.js';
import { createResultViews } from './views/result_views.js';
import { createAnalysis } from './views/analysis.js';
import { setupSharing, isRecipeFileList } from './io/sharing.js';

const DEMO_URL = 'demo/fin-wake.npz';
/** Playback pace: snapshots per second of wall-clock time. */
const PLAYBACK_FPS = 15;
/** Width kept free beside the map for the colour bar (CSS px), plus the gap between them. */
const LEGEND_RESERVE = 112;
/** Runs shorter than this show no progress bar (ms). */
const PROGRESS_DELAY = 300;
/** Velocity arrows along the longer side of the map. */
const ARROWS_ACROSS = 32;

const $ = (id) => document.getElementById(id);

const messages = createMessages($('message'));

function describeFailure(error, what) {
  if (error instanceof CorePanic) {
    return `The analysis core stopped on an internal error while ${what}:\n${error.message}\n`
      + 'Reload the page to continue.';
  }
  return `Could not ${what}: ${error.message}`;
}

async function start() {
  let core;
  try {
    core = await loadCore();
  } catch (error) {
    messages.error(`The analysis core could not be started: ${error.message}`);
    return;
  }
  const quantities = core.quantities();
  const transportMaps = core.transportMaps();
  // Views added by the cleaning/modes/sensitivity cards (views/analysis.js).
  const resultViews = createResultViews();
  const isTransport = (id) => transportMaps.some((m) => m.id === id) || resultViews.has(id);
  const params = new URLSearchParams(window.location.search);
  const pool = createPool({
    module: core.module,
    size: Number(params.get('workers')) || navigator.hardwareConcurrency || 1,
    onGiveUp: (text) => messages.error(text),
  });
  const store = createStore({
    dataset: null,
    datasetId: 0,
    files: null,
    quantity: quantities[0].id,
    scope: 'series',
    k: 0,
    range: null,
    playing: false,
    // The last FTLE result: {id, settings, grid, arrays: {ftle, tau, flag}, ranges,
    // ridges, warnings, seconds, workers}; kept when a later run fails or is cancelled.
    transport: null,
    running: false,
    window: null,
    showRidges: false,
    showArrows: false,
  });

  // --- actions: the only places the state changes -----------------------------------------

  /** Recomputes the colour range for a state (the core decides it). */
  function rangeFor(s) {
    if (resultViews.has(s.quantity)) return resultViews.get(s.quantity).range;
    if (isTransport(s.quantity)) return s.transport?.ranges[s.quantity] ?? null;
    return s.dataset ? s.dataset.defaultRange(s.quantity, s.k, s.scope) : null;
  }

  function guarded(what, fn) {
    try {
      fn();
    } catch (error) {
      store.set({ playing: false });
      messages.error(describeFailure(error, what));
    }
  }

  function setView(patch) {
    guarded('update the view', () => {
      const next = { ...store.get(), ...patch };
      const rangeChanges = 'quantity' in patch || 'scope' in patch || 'dataset' in patch
        || ('k' in patch && next.scope === 'snapshot' && !isTransport(next.quantity));
      store.set(rangeChanges ? { ...patch, range: rangeFor(next) } : patch);
    });
  }

  function options() {
    return {
      lengthUnit: $('length-unit').value,
      timeUnit: $('time-unit').value,
      dt: $('dt').value,
    };
  }

  /**
   * The core's memory estimate for `sources` (io/memory.js), or null when it could not be
   * made (the reader then says what is wrong with the files). A refusal is shown here.
   */
  async function memoryVerdict(sources, label) {
    let estimate;
    try {
      estimate = await estimateMemory(core, sources, deviceHints(pool.size));
    } catch {
      return null;
    }
    if (!estimate.fits) {
      messages.error(`Could not open ${label}: ${estimate.refusal}`);
      document.body.dataset.load = 'refused';
    }
    return estimate;
  }

  /**
   * Opens [{name, bytes}] as the new dataset; the old one stays on failure, and when the
   * core's memory estimate says the tab cannot hold them (`estimate`: made before the files
   * were read, else made here). `label` names the files in progress notes, `what` in
   * failures (the core's message names the file).
   */
  async function open(files, label, what = label, estimate = undefined) {
    const verdict = estimate === undefined
      ? await memoryVerdict(files.map((f) => bytesSource(f.name, f.bytes)), label)
      : estimate;
    if (verdict && !verdict.fits) return;
    messages.info(verdict ? `Reading ${label}: ${verdict.text}…` : `Reading ${label}…`);
    // Let the message paint before the (synchronous) read.
    requestAnimationFrame(() => setTimeout(() => {
      guarded(`open ${what}`, () => {
        const dataset = core.openDataset(files, options());
        const previous = store.get().dataset;
        if (store.get().running) pool.cancel();
        const k = 0;
        const quantity = isTransport(store.get().quantity) ? quantities[0].id : store.get().quantity;
        const next = { ...store.get(), dataset, k, quantity };
        const datasetId = store.get().datasetId + 1;
        store.set({
          dataset,
          datasetId,
          files,
          k,
          quantity,
          playing: false,
          range: rangeFor(next),
          transport: null,
          window: null,
        });
        if (previous) previous.free();
        messages.clear();
        $('load-estimate').textContent = verdict ? `Memory: ${verdict.text}` : '';
        document.body.dataset.load = 'done';
        pool.setDataset(datasetId, dataset.canonicalNpz());
        applyDefaults(dataset);
        sharing.datasetOpened(dataset, files);
      });
    }, 0));
  }

  /**
   * Makes `dataset` the working series (a cleaned copy, or the series as read again); the
   * caller keeps or frees the previous one. The transport settings stay as they are.
   */
  function replaceDataset(dataset) {
    if (store.get().running) pool.cancel();
    const s = store.get();
    const quantity = isTransport(s.quantity) ? quantities[0].id : s.quantity;
    const k = Math.min(s.k, dataset.nt - 1);
    const datasetId = s.datasetId + 1;
    store.set({
      dataset, datasetId, k, quantity, playing: false, transport: null,
      range: rangeFor({ ...s, dataset, k, quantity }),
    });
    pool.setDataset(datasetId, dataset.canonicalNpz());
    refreshWarnings(transportPanel.read());
  }

  async function openFileList(fileList) {
    if (isRecipeFileList(fileList)) {
      // A .json file is a recipe (the analysis settings), not data.
      sharing.openRecipeFile(fileList[0]);
      return;
    }
    // The File objects, kept: the picker's list is emptied once its handler returns (and a
    // drop's with it), while the estimate below waits for pieces of the files.
    const chosen = Array.from(fileList);
    const names = chosen.map((f) => f.name);
    const label = names.length === 1 ? names[0] : `${names.length} files`;
    const what = names.length === 1 ? 'the file' : 'the files';
    // Before anything is read: can the tab hold these data?
    const verdict = await memoryVerdict(chosen.map(fileSource), label);
    if (verdict && !verdict.fits) return;
    let files;
    try {
      files = await readFiles(chosen);
    } catch (error) {
      messages.error(`Could not read ${label} from disk: ${error.message}`);
      return;
    }
    open(files, label, what, verdict);
  }

  async function openDemo() {
    messages.info('Loading the demo field…');
    let response;
    try {
      response = await fetch(DEMO_URL);
    } catch (error) {
      messages.error(`The demo field could not be fetched (${error.message}). Open your own files to begin.`);
      return;
    }
    if (!response.ok) {
      messages.info(`The demo field is not available here (${DEMO_URL}: HTTP ${response.status}). Open your own files to begin.`);
      return;
    }
    const bytes = new Uint8Array(await response.arrayBuffer());
    open([{ name: DEMO_URL.split('/').pop(), bytes, demo: true }], 'the demo field');
  }

  // --- views --------------------------------------------------------------------------------

  const figure = document.querySelector('.figure');
  const fieldMap = createFieldMap($('field-map'), core);
  const colorbar = createColorbar($('colorbar'), core);
  const summary = createSummary($('summary'));
  const timeControl = createTimeControl({
    slider: $('snapshot'),
    button: $('play'),
    label: $('time-label'),
    onSnapshot: (k) => setView({ k, playing: false }),
    onPlay: (playing) => store.set({ playing }),
  });

  const quantitySelect = $('quantity');
  for (const q of quantities) quantitySelect.add(new Option(q.label, q.id));
  const resultGroup = document.createElement('optgroup');
  resultGroup.label = 'Transport result';
  for (const m of transportMaps) {
    const option = new Option(m.label, m.id);
    option.disabled = true;
    resultGroup.append(option);
  }
  quantitySelect.append(resultGroup);
  resultViews.attach(quantitySelect);
  $('show-ridges').addEventListener('change', () => store.set({ showRidges: $('show-ridges').checked }));
  $('show-arrows').addEventListener('change', () => guarded('draw the arrows',
    () => store.set({ showArrows: $('show-arrows').checked })));
  $('reset-zoom').addEventListener('click', () => store.set({ window: null }));
  quantitySelect.addEventListener('change', () => setView({ quantity: quantitySelect.value }));
  $('scope').addEventListener('change', () => setView({ scope: $('scope').value }));
  $('reread').addEventListener('click', () => {
    const { files } = store.get();
    if (files) open(files, files.length === 1 ? files[0].name : `${files.length} files`, 'the files');
    else messages.info('Open files first; the options apply to every read.');
  });

  function transportCaption(t) {
    const unit = store.get().dataset.timeUnit;
    const u = unit === '1' ? '' : ` ${unit}`;
    return `t₀ = ${core.formatNumber(t.settings.t0, 4)}${u}, ${t.settings.direction}, |T| = ${core.formatNumber(t.settings.horizon, 3)}${u}`;
  }

  function arrowsFor(s) {
    if (!s.showArrows) return null;
    const key = `${s.datasetId}|${s.k}`;
    if (arrowCache.key !== key) arrowCache = { key, arrows: s.dataset.velocityArrows(s.k, ARROWS_ACROSS) };
    return arrowCache.arrows;
  }
  let arrowCache = { key: '', arrows: null };

  function drawFigure(s) {
    if (!s.dataset || !s.range) return;
    const { dataset } = s;
    const lengthUnit = dataset.lengthUnit;
    let view;
    if (resultViews.has(s.quantity)) {
      view = resultViews.get(s.quantity).view(s);
    } else if (isTransport(s.quantity) && s.transport) {
      const t = s.transport;
      const m = transportMaps.find((x) => x.id === s.quantity);
      const values = s.quantity === 'ftle' ? t.arrays.ftle : t.arrays.tau;
      const [lo, hi] = s.range;
      const unit = dataset.transportUnit(s.quantity);
      view = {
        picture: {
          key: `t${t.id}|${s.quantity}|${lo}|${hi}`,
          nx: t.grid.nx,
          ny: t.grid.ny,
          extent: t.grid.extent,
          paint: () => core.transportImage(s.quantity, values, t.arrays.flag, t.grid.nx, t.grid.ny, lo, hi),
        },
        title: m.label,
        caption: transportCaption(t),
        quantityLabel: m.label,
        colormap: m.colormap,
        unit,
      };
    } else {
      const q = quantities.find((x) => x.id === s.quantity);
      const [lo, hi] = s.range;
      view = {
        picture: {
          key: `${s.datasetId}|${s.quantity}|${s.k}|${lo}|${hi}`,
          nx: dataset.nx,
          ny: dataset.ny,
          extent: dataset.extent(),
          paint: () => dataset.render(s.quantity, s.k, lo, hi),
        },
        title: q.label,
        caption: `t = ${dataset.timeLabel(s.k)}`,
        quantityLabel: q.label,
        colormap: q.colormap,
        unit: dataset.unit(s.quantity),
      };
    }
    const lo = core.formatNumber(s.range[0], 3);
    const hi = core.formatNumber(s.range[1], 3);
    const unitText = view.unit === '1' ? '' : ` ${view.unit}`;
    Object.assign(view, {
      extent: dataset.extent(),
      window: s.window,
      lengthUnit,
      range: s.range,
      ridges: s.showRidges ? (view.ridges ?? s.transport?.ridges ?? resultViews.ridges()) : null,
      arrows: arrowsFor(s),
      ariaLabel: `${view.title}, ${view.caption}, colours from ${lo} to ${hi}${unitText}`
        + `${s.showRidges && (view.ridges ?? s.transport?.ridges ?? resultViews.ridges())
          ? `, ${(view.ridges ?? s.transport?.ridges ?? resultViews.ridges()).length} FTLE ridges drawn` : ''}`,
    });
    const box = fieldMap.draw(view, figure.clientWidth - LEGEND_RESERVE);
    colorbar.draw(view, box);
  }

  store.subscribe((s, keys) => {
    guarded('draw the field', () => {
      if (keys.has('dataset')) summary.draw(s.dataset ? s.dataset.summary() : null);
      if (keys.has('dataset') || keys.has('k') || keys.has('playing')) timeControl.draw(s);
      if (['dataset', 'quantity', 'k', 'range', 'size', 'window', 'showRidges', 'showArrows', 'transport', 'results']
        .some((key) => keys.has(key))) drawFigure(s);
      if (keys.has('quantity') || keys.has('transport')) {
        for (const m of transportMaps) quantitySelect.querySelector(`option[value="${m.id}"]`).disabled = !s.transport;
        quantitySelect.value = s.quantity;
        $('scope').disabled = isTransport(s.quantity);
      }
      if (keys.has('transport') || keys.has('results')) {
        $('show-ridges').disabled = !s.transport && !resultViews.hasRidges();
        drawReport(s);
      }
      if (keys.has('running') || keys.has('dataset')) transportPanel.setEnabled(!!s.dataset && !s.running);
    });
  });

  // --- transport ------------------------------------------------------------------------------

  let warningTimer = 0;
  function refreshWarnings(settings) {
    clearTimeout(warningTimer);
    warningTimer = setTimeout(() => {
      const { dataset } = store.get();
      if (!dataset) return;
      try {
        transportPanel.warnings(dataset.transportWarnings(settings));
      } catch (error) {
        transportPanel.warnings([{ level: 'refuse', code: 'core_error', text: error.message }]);
      }
    }, 120);
  }

  function applyDefaults(dataset) {
    const d = dataset.transportDefaults();
    transportPanel.fill(d.settings, d.notes, { time: dataset.timeUnit });
    refreshWarnings(d.settings);
  }

  const progress = {
    box: $('progress'),
    bar: $('progress-bar'),
    text: $('progress-text'),
    timer: 0,
    show() { this.box.hidden = false; },
    start() {
      this.bar.value = 0;
      this.text.textContent = 'Starting…';
      clearTimeout(this.timer);
      this.timer = setTimeout(() => this.show(), PROGRESS_DELAY);
    },
    update({ fraction, remaining }) {
      this.bar.value = fraction;
      const left = remaining < 1 ? 'less than a second' : `about ${core.formatNumber(remaining, 2)} s`;
      this.text.textContent = `${Math.round(100 * fraction)} % · ${left} left`;
    },
    stop() {
      clearTimeout(this.timer);
      this.box.hidden = true;
    },
  };

  function setRunState(state) {
    document.body.dataset.run = state;
  }

  async function compute(settings) {
    const s0 = store.get();
    if (!s0.dataset || s0.running) return;
    const { dataset, datasetId } = s0;
    let grid;
    try {
      const refusals = dataset.transportWarnings(settings).filter((w) => w.level === 'refuse');
      if (refusals.length > 0) {
        transportPanel.warnings(dataset.transportWarnings(settings));
        return;
      }
      grid = dataset.tracerGrid(settings);
    } catch (error) {
      messages.error(describeFailure(error, 'prepare the FTLE run'));
      return;
    }
    store.set({ running: true, playing: false });
    setRunState('running');
    messages.clear();
    progress.start();
    try {
      const run = await pool.run({
        kind: 'ftle',
        settings: JSON.stringify(settings),
        rows: grid.ny,
        onProgress: (p) => progress.update(p),
      });
      if (store.get().datasetId !== datasetId) return;
      const { arrays } = run;
      const signed = settings.direction === 'backward' ? -settings.horizon : settings.horizon;
      const ranges = {
        ftle: core.transportRange('ftle', arrays.ftle, arrays.flag, signed),
        exit_time: core.transportRange('exit_time', arrays.tau, arrays.flag, signed),
      };
      const ridges = dataset.ftleRidges(settings, arrays.ftle, arrays.flag).ridges;
      const transport = {
        id: (s0.transport?.id ?? 0) + 1,
        settings,
        grid,
        arrays,
        ranges,
        ridges,
        warnings: core.transportRunWarnings(arrays.flag),
        seconds: run.seconds,
        workers: pool.size,
      };
      const quantity = isTransport(store.get().quantity) ? store.get().quantity : 'ftle';
      store.set({ transport, quantity, range: ranges[quantity] });
      setRunState('done');
    } catch (error) {
      if (error instanceof JobCancelled) {
        messages.info('The FTLE run was cancelled. Any earlier result is still shown.');
        setRunState('cancelled');
      } else if (error instanceof JobFailed && error.panic) {
        messages.error('The analysis core stopped on an internal error in a compute worker:\n'
          + `${error.message}\nThat worker was restarted; any earlier result is still shown.`);
        setRunState('failed');
      } else {
        messages.error(`Could not compute the FTLE: ${error.message}`);
        setRunState('failed');
      }
    } finally {
      progress.stop();
      store.set({ running: false });
    }
  }

  function drawReport(s) {
    const box = $('run-report');
    const t = s.transport;
    box.hidden = !t;
    if (!t) return;
    const workers = t.workers === 1 ? '1 worker' : `${t.workers} workers`;
    $('run-summary').textContent = `FTLE on ${t.grid.nx} × ${t.grid.ny} tracers, ${transportCaption(t)}: `
      + `${core.formatNumber(t.seconds, 2)} s with ${workers}; ${t.ridges.length} ridges found.`;
    showWarnings($('run-warnings'), t.warnings);
  }

  const transportPanel = createTransportPanel({
    onChange: refreshWarnings,
    onCompute: (settings) => compute(settings),
    onDefaults: () => { const { dataset } = store.get(); if (dataset) applyDefaults(dataset); },
  });
  $('cancel-run').addEventListener('click', () => pool.cancel());
  createAnalysis({
    core, store, pool, messages, resultViews, replaceDataset, setView, describeFailure,
    transportSettings: () => transportPanel.read(),
  });

  // --- probe and navigation -------------------------------------------------------------------

  let fieldCache = { key: '', values: null };
  let maskCache = { id: -1, mask: null };
  function probeText(s, [x, y]) {
    const { dataset } = s;
    const lu = dataset.lengthUnit === '1' ? '' : ` ${dataset.lengthUnit}`;
    const where = `x = ${core.formatNumber(x, 4)}${lu}, y = ${core.formatNumber(y, 4)}${lu}`;
    let label;
    let unit;
    let value = null;
    if (resultViews.has(s.quantity)) {
      ({ label, unit, value } = resultViews.get(s.quantity).probe([x, y]));
    } else if (isTransport(s.quantity) && s.transport) {
      const t = s.transport;
      const m = transportMaps.find((q) => q.id === s.quantity);
      label = m.label;
      unit = dataset.transportUnit(s.quantity);
      const i = Math.round((x - t.grid.x[0]) / t.grid.x[1]);
      const j = Math.round((y - t.grid.y[0]) / t.grid.y[1]);
      if (i >= 0 && j >= 0 && i < t.grid.nx && j < t.grid.ny) {
        const c = j * t.grid.nx + i;
        const flag = t.arrays.flag[c];
        const has = s.quantity === 'ftle' ? flag <= 2 : flag !== 3;
        if (has) value = (s.quantity === 'ftle' ? t.arrays.ftle : t.arrays.tau)[c];
      }
    } else {
      const q = quantities.find((x2) => x2.id === s.quantity);
      label = q.label;
      unit = dataset.unit(s.quantity);
      const key = `${s.datasetId}|${s.quantity}|${s.k}`;
      if (fieldCache.key !== key) {
        fieldCache = { key, values: dataset.field(s.quantity, s.k) };
      }
      if (maskCache.id !== s.datasetId) maskCache = { id: s.datasetId, mask: dataset.mask() };
      const [x0, dx, y0, dy] = dataset.grid();
      const i = Math.round((x - x0) / dx);
      const j = Math.round((y - y0) / dy);
      if (i >= 0 && j >= 0 && i < dataset.nx && j < dataset.ny) {
        const c = j * dataset.nx + i;
        if (!maskCache.mask[c]) value = fieldCache.values[c];
      }
    }
    const u = unit === '1' ? '' : ` ${unit}`;
    return `${where} · ${label} = ${value === null ? 'no data' : `${core.formatNumber(value, 4)}${u}`}`;
  }

  const probe = $('probe');
  attachNavigation($('field-map'), fieldMap, {
    getExtent: () => store.get().dataset?.extent() ?? null,
    onWindow: (win) => store.set({ window: win }),
    onProbe: (p) => {
      const s = store.get();
      if (!p || !s.dataset) {
        probe.textContent = 'Point at the map to read values.';
        return;
      }
      guarded('read the value under the pointer', () => { probe.textContent = probeText(s, p); });
    },
  });

  window.sillagePage = {
    /** The last FTLE result (arrays and settings), for tests and the console. */
    transport: () => store.get().transport,
    workers: pool.size,
    /** Runs one job of `kind` over `rows` rows; resolves to 'ok' or the error's message. */
    runJob: (kind, rows = 1) => pool.run({ kind, settings: '{}', rows })
      .then(() => 'ok', (error) => `${error.name}: ${error.message}`),
  };

  // --- playback -------------------------------------------------------------------------------

  let lastStep = 0;
  function tick(now) {
    const s = store.get();
    if (s.playing && s.dataset) {
      if (now - lastStep >= 1000 / PLAYBACK_FPS) {
        lastStep = now;
        setView({ k: (s.k + 1) % s.dataset.nt });
      }
    }
    requestAnimationFrame(tick);
  }
  requestAnimationFrame(tick);

  // --- inputs and layout ----------------------------------------------------------------------

  setupFileSources({
    button: $('open-files'),
    input: $('file-input'),
    overlay: $('drop-overlay'),
    onFiles: openFileList,
  });
  new ResizeObserver(() => store.touch('size')).observe(figure);
  window.addEventListener('resize', () => store.touch('size'));
  onPixelRatioChange(() => store.touch('size'));

  summary.draw(null);
  timeControl.draw(store.get());
  // Export, recipe, settings kept across reloads and share links (io/sharing.js).
  const sharing = setupSharing({
    core,
    store,
    setView,
    isTransport,
    quantities,
    transportMaps,
    resultViews,
    transportPanel,
    refreshWarnings,
    messages,
    readOptions: options,
    openDemo,
    openFiles: open,
    embedded,
  });
  await sharing.start();
}

start();
