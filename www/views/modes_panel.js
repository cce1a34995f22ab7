// The modes card: POD, DMD or SPOD of the working series computed by the core, its charts
// (energy spectrum with the cumulative curve; eigenvalues with the unit circle and
// amplitude against frequency; SPOD spectrum) under the map, and one picked mode: its shape
// on the field map, its temporal coefficients, and "add to f / g", which appends its
// selection term to the sensitivity card's inputs. Every number comes from the core; the
// decomposition itself is computed in a compute worker (job kind 'modes') and arrives as
// bytes that the page's core reads back bit for bit (`Dataset.modesFromBytes`).
// The card owns the recipe's `modes` step (method, rank): present once a decomposition was
// computed or a recipe named one; applying a recipe fills the inputs but computes nothing.
import * as recipeState from '../recipe_state.js';
import { JobCancelled, JobFailed } from '../compute/pool.js';
import { drawChart } from './charts.js';
import { createJobProgress } from './job_progress.js';
import { showWarnings } from './transport_panel.js';

const $ = (id) => document.getElementById(id);

export function createModesPanel(ctx, sensitivity) {
  const { core, store, messages, resultViews, pool } = ctx;
  const progress = createJobProgress('modes', { core, pool });
  const form = $('modes-form');
  const method = $('md-method');
  const rank = $('md-rank');
  const button = $('md-run');
  const warnings = $('modes-warnings');
  const pick = $('md-pick');
  const kInput = $('md-k');
  const component = $('md-component');
  const describe = $('md-describe');
  const view = $('modes-view');
  const chartA = $('modes-chart-a');
  const chartB = $('modes-chart-b');
  const coeffCanvas = $('modes-coefficients');

  let modes = null; // core Modes
  let overview = null;
  let picked = 0;
  let hit = { a: null, b: null };
  let step = null; // the recipe's modes step: {method, rank?}, or null

  /** The inputs as a recipe step (rank as typed: the core checks it). */
  function readStep() {
    const text = rank.value.trim();
    const request = { method: method.value };
    if (text !== '') request.rank = Number.isFinite(Number(text)) ? Number(text) : text;
    return request;
  }

  function setStatus(state) { document.body.dataset.modes = state; }

  function sync() {
    const s = store.get();
    button.disabled = !s.dataset || s.running;
  }

  function drop() {
    modes?.free();
    modes = null;
    overview = null;
    pick.disabled = true;
    view.hidden = true;
    describe.textContent = '';
    resultViews.clear('modes');
  }

  function drawCharts() {
    if (!overview) return;
    const width = Math.max(260, view.clientWidth);
    const [a, b] = overview.charts;
    const half = b ? Math.floor((width - 16) / 2) : width;
    hit.a = drawChart(chartA, core, a, { width: half, picked });
    chartB.hidden = !b;
    hit.b = b ? drawChart(chartB, core, b, { width: half, picked }) : null;
    const coeff = modes.coefficients(picked);
    coeffCanvas.hidden = !coeff;
    if (coeff) drawChart(coeffCanvas, core, coeff, { width, height: 180 });
  }

  function shapeEntry() {
    const k = picked;
    const c = component.value;
    const values = modes.shape(k, c);
    const label = `${overview.method.toUpperCase()} ${overview.pick_word} ${k + 1}, ${c === 'magnitude' ? '|u|' : c} (unit norm)`;
    const { dataset } = store.get();
    const [x0, dx, y0, dy] = dataset.grid();
    const mask = dataset.mask();
    return {
      id: 'mode:shape',
      label: 'Picked mode shape',
      unit: '1',
      when: `${modes.term(k)}, ${c === 'magnitude' ? '|u|' : c}, unit norm`,
      stem: `${overview.method}-mode-${k + 1}-${c}`,
      exportBytes: (format) => modes.exportShape(k, c, format),
      range: modes.shapeRange(k, c),
      legend: `${modes.describe(k)}. Colours ${c === 'magnitude' ? 'from 0' : 'symmetric about 0'}; modes have unit norm, so the scale is arbitrary.`,
      view: (s) => {
        const [lo, hi] = s.range;
        return {
          picture: {
            key: `m${overview.method}|${k}|${c}|${lo}|${hi}|${s.datasetId}`,
            nx: dataset.nx,
            ny: dataset.ny,
            extent: dataset.extent(),
            paint: () => modes.shapeImage(k, c, lo, hi),
          },
          title: label,
          caption: modes.term(k),
          quantityLabel: label,
          colormap: modes.shapeColormap(c),
          unit: '1',
        };
      },
      probe: ([x, y]) => {
        const i = Math.round((x - x0) / dx);
        const j = Math.round((y - y0) / dy);
        let value = null;
        if (i >= 0 && j >= 0 && i < dataset.nx && j < dataset.ny && !mask[j * dataset.nx + i]) {
          value = values[j * dataset.nx + i];
        }
        return { label, unit: '1', value };
      },
    };
  }

  function choose(k) {
    if (!modes) return;
    const n = Math.max(1, Math.min(modes.count, Math.round(Number(k)) || 1));
    picked = n - 1;
    kInput.value = String(n);
    try {
      describe.textContent = modes.describe(picked);
      resultViews.set('modes', 'Modes', [shapeEntry()]);
      drawCharts();
      ctx.setView({ quantity: 'mode:shape', results: resultViews.version });
    } catch (error) {
      messages.error(ctx.describeFailure(error, 'show the mode'));
    }
  }

  form.addEventListener('submit', (e) => {
    e.preventDefault();
    const { dataset, running } = store.get();
    if (!dataset || running) return;
    if (dataset.gapCount > 0) {
      showWarnings(warnings, [{ level: 'refuse', code: 'clean_first', text:
        `The series has ${dataset.gapCount} missing vectors; modal decompositions need complete `
        + 'snapshots: clean first (Cleaning card).' }]);
      return;
    }
    const request = readStep();
    compute(request);
  });

  /** Computes the decomposition in a worker; on failure the earlier one stays. */
  async function compute(request) {
    const { dataset, datasetId } = store.get();
    messages.clear();
    store.set({ running: true, playing: false });
    setStatus('running');
    progress.start(`Computing the ${request.method.toUpperCase()}`);
    let next = null;
    try {
      const job = await pool.run({
        kind: 'modes', settings: JSON.stringify(request), rows: 1, onProgress: (p) => progress.update(p),
      });
      if (store.get().datasetId !== datasetId) throw new JobCancelled();
      next = dataset.modesFromBytes(job.arrays.modes);
      const nextOverview = next.overview();
      drop();
      modes = next;
      overview = nextOverview;
      showWarnings(warnings, []);
      $('modes-summary').textContent = overview.text;
      kInput.max = String(modes.count);
      $('md-k-label').textContent = overview.pick_word === 'frequency' ? 'Frequency bin' : 'Mode';
      pick.disabled = false;
      view.hidden = false;
      step = request;
      recipeState.changed();
      choose(1);
      setStatus('done');
    } catch (error) {
      if (next && next !== modes) next.free();
      if (error instanceof JobCancelled) {
        messages.info('The modes computation was cancelled. Any earlier result is still shown.');
        setStatus('cancelled');
      } else if (error instanceof JobFailed && error.panic) {
        messages.error('The analysis core stopped on an internal error in a compute worker:\n'
          + `${error.message}\nThat worker was restarted; any earlier result is still shown.`);
        setStatus('failed');
      } else {
        showWarnings(warnings, [{ level: 'refuse', code: 'core_error', text: error.message }]);
        setStatus('failed');
      }
    } finally {
      progress.stop();
      store.set({ running: false });
    }
  }

  kInput.addEventListener('change', () => choose(kInput.value));
  // Enter picks the mode (instead of submitting the form, which would compute again).
  kInput.addEventListener('keydown', (e) => {
    if (e.key === 'Enter') {
      e.preventDefault();
      choose(kInput.value);
    }
  });
  component.addEventListener('change', () => choose(picked + 1));
  for (const [canvas, key] of [[chartA, 'a'], [chartB, 'b']]) {
    canvas.addEventListener('click', (e) => {
      const rect = canvas.getBoundingClientRect();
      const k = hit[key]?.(e.clientX - rect.left, e.clientY - rect.top);
      if (k !== null && k !== undefined) choose(k + 1);
    });
  }
  $('md-add-f').addEventListener('click', () => { if (modes) sensitivity.append('f', modes.term(picked)); });
  $('md-add-g').addEventListener('click', () => { if (modes) sensitivity.append('g', modes.term(picked)); });

  recipeState.register('modes', {
    get: () => step,
    set(value) {
      step = value ?? null;
      method.value = value?.method ?? 'pod';
      rank.value = value?.rank == null ? '' : String(value.rank);
      if (value && !modes) {
        showWarnings(warnings, [{ level: 'note', code: 'from_recipe', text: `The recipe asks for `
          + `${method.value.toUpperCase()}${value.rank == null ? '' : ` of rank ${value.rank}`}: `
          + 'press “Compute modes” to compute it.' }]);
      }
    },
  });

  store.subscribe((s, keys) => {
    if (keys.has('dataset')) drop();
    if (keys.has('size') && overview) drawCharts();
    if (keys.has('dataset') || keys.has('running')) sync();
  });

  return {
    /** The overview of the last decomposition, for tests and the console. */
    overview: () => overview,
    picked: () => picked,
  };
}
