// Wires the page: the core, the state, the views and the user's inputs. Holds no numerics:
// ranges, labels, pixels and summaries all come from the core (core.js).
import { loadCore, CorePanic } from './core.js';
import { createStore } from './state.js';
import { readFiles, setupFileSources } from './io/files.js';
import { onPixelRatioChange } from './views/canvas.js';
import { createFieldMap } from './views/field_map.js';
import { createColorbar } from './views/colorbar.js';
import { createSummary } from './views/summary.js';
import { createTimeControl } from './views/time_control.js';
import { createMessages } from './views/messages.js';

const DEMO_URL = 'demo/fin-wake.npz';
/** Playback pace: snapshots per second of wall-clock time. */
const PLAYBACK_FPS = 15;
/** Width kept free beside the map for the colour bar (CSS px), plus the gap between them. */
const LEGEND_RESERVE = 112;

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
  const store = createStore({
    dataset: null,
    datasetId: 0,
    files: null,
    quantity: quantities[0].id,
    scope: 'series',
    k: 0,
    range: null,
    playing: false,
  });

  // --- actions: the only places the state changes -----------------------------------------

  /** Recomputes the colour range for a state (the core decides it). */
  function rangeFor(s) {
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
        || ('k' in patch && next.scope === 'snapshot');
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
   * Opens [{name, bytes}] as the new dataset; the old one stays on failure. `label` names
   * the files in progress notes, `what` in failures (the core's message names the file).
   */
  function open(files, label, what = label) {
    messages.info(`Reading ${label}…`);
    // Let the message paint before the (synchronous) read.
    requestAnimationFrame(() => setTimeout(() => {
      guarded(`open ${what}`, () => {
        const dataset = core.openDataset(files, options());
        const previous = store.get().dataset;
        const k = 0;
        const next = { ...store.get(), dataset, k };
        store.set({
          dataset,
          datasetId: store.get().datasetId + 1,
          files,
          k,
          playing: false,
          range: rangeFor(next),
        });
        if (previous) previous.free();
        messages.clear();
      });
    }, 0));
  }

  async function openFileList(fileList) {
    const names = Array.from(fileList, (f) => f.name);
    const label = names.length === 1 ? names[0] : `${names.length} files`;
    const what = names.length === 1 ? 'the file' : 'the files';
    let files;
    try {
      files = await readFiles(fileList);
    } catch (error) {
      messages.error(`Could not read ${label} from disk: ${error.message}`);
      return;
    }
    open(files, label, what);
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
    open([{ name: DEMO_URL.split('/').pop(), bytes }], 'the demo field');
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
  quantitySelect.addEventListener('change', () => setView({ quantity: quantitySelect.value }));
  $('scope').addEventListener('change', () => setView({ scope: $('scope').value }));
  $('reread').addEventListener('click', () => {
    const { files } = store.get();
    if (files) open(files, files.length === 1 ? files[0].name : `${files.length} files`, 'the files');
    else messages.info('Open files first; the options apply to every read.');
  });

  function drawFigure(s) {
    if (!s.dataset || !s.range) return;
    const q = quantities.find((x) => x.id === s.quantity);
    const view = {
      dataset: s.dataset,
      datasetId: s.datasetId,
      quantity: s.quantity,
      quantityLabel: q.label,
      colormap: q.colormap,
      unit: s.dataset.unit(s.quantity),
      k: s.k,
      range: s.range,
    };
    const box = fieldMap.draw(view, figure.clientWidth - LEGEND_RESERVE);
    colorbar.draw(view, box);
  }

  store.subscribe((s, keys) => {
    guarded('draw the field', () => {
      if (keys.has('dataset')) summary.draw(s.dataset ? s.dataset.summary() : null);
      if (keys.has('dataset') || keys.has('k') || keys.has('playing')) timeControl.draw(s);
      if (['dataset', 'quantity', 'k', 'range', 'size'].some((key) => keys.has(key))) drawFigure(s);
      if (keys.has('quantity')) quantitySelect.value = s.quantity;
    });
  });

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
  await openDemo();
}

start();
