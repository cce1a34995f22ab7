// The sensitivity card: the model flow f and the perturbation g as selections of modes, the
// optional ε of the brute-force Δσ and g_ref, run with the Transport panel's settings on the
// worker pool (job kind 'sensitivity'). The maps join the field menu with f's FTLE ridges;
// warnings, g_ref, the agreement of ζ with Δσ and the normalisation of σ_MS are shown
// beside the map. Every number comes from the core.
// The card owns the recipe's `model`, `perturbation` (the selection texts) and
// `sensitivity` (ε, g_ref) parts: present once a run was made or a recipe brought them;
// applying a recipe fills the inputs and never starts a run (the user presses Compute).
// Its maps can be saved one by one (the export card's "Save map data") or all at once in
// the `sillage sensitivity --out` layout ("Save all sensitivity maps").
import * as recipeState from '../recipe_state.js';
import { JobCancelled, JobFailed } from '../compute/pool.js';
import { offerDownload } from '../io/export.js';
import { showWarnings } from './transport_panel.js';

const $ = (id) => document.getElementById(id);
const PROGRESS_DELAY = 300;

function numberOrNull(text) {
  const t = text.trim().replace(',', '.').replace('\u2212', '-');
  return t === '' ? null : Number(t);
}

export function createSensitivityPanel(ctx) {
  const { core, store, pool, messages, resultViews } = ctx;
  const form = $('sens-form');
  const fText = $('sens-f');
  const gText = $('sens-g');
  const eps = $('sens-eps');
  const gref = $('sens-gref');
  const button = $('sens-run');
  const warnings = $('sens-warnings');
  const uses = $('sens-uses');
  const maps = core.sensitivityMaps();
  const normalisation = core.sensitivityNormalisation();
  let tag = 0;
  let result = null; // {id, grid, arrays, ranges, ridges, warnings, agreement, g_ref_text, …}
  let running = false;
  let active = false; // the recipe carries this card's parts (a run was made, or a recipe set them)

  const progress = {
    box: $('sens-progress'),
    bar: $('sens-progress-bar'),
    text: $('sens-progress-text'),
    timer: 0,
    start() {
      this.bar.value = 0;
      this.text.textContent = 'Starting…';
      clearTimeout(this.timer);
      this.timer = setTimeout(() => { this.box.hidden = false; }, PROGRESS_DELAY);
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

  function setStatus(state) { document.body.dataset.sensitivity = state; }

  function sync() {
    const s = store.get();
    button.disabled = !s.dataset || s.running;
    const rk4 = ctx.transportSettings().integrator === 'rk4';
    uses.classList.toggle('attention', !rk4);
  }
  document.getElementById('tr-integrator').addEventListener('change', sync);

  function caption(r) {
    const unit = store.get().dataset.timeUnit;
    const u = unit === '1' ? '' : ` ${unit}`;
    const t = r.settings;
    return `f = ${r.f}, g = ${r.g} · t₀ = ${core.formatNumber(t.t0, 4)}${u}, ${t.direction}, `
      + `|T| = ${core.formatNumber(t.horizon, 3)}${u}`;
  }

  function entries(r) {
    const { dataset } = store.get();
    return maps.filter((m) => m.id in r.arrays).map((m) => {
      const values = r.arrays[m.id];
      const unit = dataset.sensitivityUnit(m.id);
      const legend = `${m.label}: ${m.range_note}.`
        + (m.normalised ? ` Normalisation: ${normalisation}` : '');
      return {
        id: `sens:${m.id}`,
        label: m.label,
        unit,
        when: caption(r),
        exportBytes: (format) => dataset.exportSensitivity(m.id, JSON.stringify(r.settings), values,
          r.arrays.flag, format),
        range: r.ranges[m.id],
        ridges: r.ridges,
        legend,
        view: (s) => {
          const [lo, hi] = s.range;
          return {
            picture: {
              key: `s${r.id}|${m.id}|${lo}|${hi}`,
              nx: r.grid.nx,
              ny: r.grid.ny,
              extent: r.grid.extent,
              paint: () => core.sensitivityImage(m.id, values, r.arrays.flag, r.grid.nx, r.grid.ny, lo, hi),
            },
            title: m.label,
            caption: caption(r),
            quantityLabel: m.label,
            colormap: m.colormap,
            unit,
            ridges: r.ridges,
          };
        },
        probe: ([x, y]) => {
          const i = Math.round((x - r.grid.x[0]) / r.grid.x[1]);
          const j = Math.round((y - r.grid.y[0]) / r.grid.y[1]);
          let value = null;
          if (i >= 0 && j >= 0 && i < r.grid.nx && j < r.grid.ny) {
            const c = j * r.grid.nx + i;
            if (r.arrays.flag[c] <= 2) value = values[c];
          }
          return { label: m.label, unit, value };
        },
      };
    });
  }

  function report(r) {
    const box = $('sens-report');
    box.hidden = !r;
    if (!r) return;
    const workers = r.workers === 1 ? '1 worker' : `${r.workers} workers`;
    let text = `Sensitivity on ${r.grid.nx} × ${r.grid.ny} tracers, ${caption(r)}: `
      + `${core.formatNumber(r.seconds, 2)} s with ${workers}; g_ref = ${r.g_ref_text}; `
      + `${r.ridges.length} FTLE ridges of f.`;
    if (r.agreement) {
      const a = r.agreement;
      const f = (v) => (v === null ? 'undefined' : core.formatNumber(v, 3));
      text += ` Agreement of ζ with Δσ (ε = ${core.formatNumber(r.epsilon, 3)}) over ${a.nodes} fully `
        + `integrated tracers: Pearson r = ${f(a.pearson)}, with |Δσ| r = ${f(a.pearson_abs)}, `
        + `Spearman ρ with |Δσ| = ${f(a.spearman_abs)}.`;
    }
    $('sens-summary').textContent = text;
    showWarnings($('sens-run-warnings'), r.warnings);
  }

  function readJob() {
    const job = { transport: ctx.transportSettings() };
    const e = numberOrNull(eps.value);
    const g = numberOrNull(gref.value);
    if (e !== null) job.epsilon = Number.isFinite(e) ? e : eps.value;
    if (g !== null) job.g_ref = Number.isFinite(g) ? g : gref.value;
    return job;
  }

  async function compute() {
    const s0 = store.get();
    if (!s0.dataset || s0.running || running) return;
    const { dataset, datasetId } = s0;
    const job = readJob();
    const texts = { f: fText.value.trim(), g: gText.value.trim() };
    if (dataset.gapCount > 0) {
      showWarnings(warnings, [{ level: 'refuse', code: 'clean_first', text:
        `The series has ${dataset.gapCount} missing vectors and f and g are built from its modes, `
        + 'which need complete snapshots: clean first (Cleaning card).' }]);
      return;
    }
    running = true;
    store.set({ running: true, playing: false });
    setStatus('preparing');
    messages.info('Building f and g from the modes of the series…');
    await new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0)));
    let f = null;
    let g = null;
    let bytes;
    let check;
    let grid;
    try {
      bytes = { f: dataset.selectionNpz(texts.f), g: dataset.selectionNpz(texts.g) };
      f = core.openDataset([{ name: 'f.npz', bytes: bytes.f }]);
      g = core.openDataset([{ name: 'g.npz', bytes: bytes.g }]);
      check = core.sensitivityCheck(dataset, f, g, job);
      grid = dataset.tracerGrid(job.transport);
    } catch (error) {
      showWarnings(warnings, [{ level: 'refuse', code: 'core_error', text: error.message }]);
      messages.clear();
      f?.free();
      g?.free();
      running = false;
      store.set({ running: false });
      setStatus('failed');
      return;
    }
    // f and g live on in the workers; the page needs only their bytes.
    f.free();
    g.free();
    showWarnings(warnings, check.warnings);
    if (check.warnings.some((w) => w.level === 'refuse')) {
      messages.clear();
      running = false;
      store.set({ running: false });
      setStatus('refused');
      return;
    }
    messages.clear();
    tag += 1;
    pool.setAuxiliary(tag, bytes);
    setStatus('running');
    progress.start();
    try {
      const run = await pool.run({
        kind: 'sensitivity',
        settings: JSON.stringify({ aux: tag, core: job }),
        rows: grid.ny,
        onProgress: (p) => progress.update(p),
      });
      if (store.get().datasetId !== datasetId) return;
      const { arrays } = run;
      const ranges = {};
      for (const m of maps) if (m.id in arrays) ranges[m.id] = core.sensitivityRange(m.id, arrays[m.id], arrays.flag);
      const r = {
        id: (result?.id ?? 0) + 1,
        settings: job.transport,
        job,
        f: texts.f,
        g: texts.g,
        epsilon: job.epsilon ?? null,
        grid,
        arrays,
        ranges,
        ridges: dataset.ftleRidges(job.transport, arrays.ftle, arrays.flag).ridges,
        warnings: core.sensitivityRunWarnings(arrays.flag, arrays.ms_g),
        agreement: arrays.delta_ftle ? core.sensitivityAgreement(arrays.zeta, arrays.delta_ftle, arrays.flag) : null,
        g_ref_text: check.g_ref_text,
        g_ref: check.g_ref,
        seconds: run.seconds,
        workers: pool.size,
      };
      result = r;
      active = true;
      recipeState.changed();
      resultViews.set('sensitivity', 'Sensitivity result', entries(r));
      report(r);
      ctx.setView({ quantity: 'sens:zeta', results: resultViews.version });
      setStatus('done');
    } catch (error) {
      if (error instanceof JobCancelled) {
        messages.info('The sensitivity run was cancelled. Any earlier result is still shown.');
        setStatus('cancelled');
      } else if (error instanceof JobFailed && error.panic) {
        messages.error('The analysis core stopped on an internal error in a compute worker:\n'
          + `${error.message}\nThat worker was restarted; any earlier result is still shown.`);
        setStatus('failed');
      } else {
        messages.error(`Could not compute the sensitivity: ${error.message}`);
        setStatus('failed');
      }
    } finally {
      progress.stop();
      running = false;
      store.set({ running: false });
    }
  }

  form.addEventListener('submit', (e) => {
    e.preventDefault();
    if (!button.disabled) compute();
  });
  $('sens-cancel').addEventListener('click', () => pool.cancel());

  $('export-sensitivity').addEventListener('click', () => {
    const status = $('share-status');
    const { dataset } = store.get();
    if (!result || !dataset) {
      status.textContent = 'Nothing to save yet: compute the sensitivity first (Mode sensitivity card).';
      return;
    }
    try {
      offerDownload(dataset.sensitivityNpz(JSON.stringify(result.job), result.g_ref, result.arrays),
        'sillage-sensitivity.npz');
      status.textContent = 'All sensitivity maps saved as sillage-sensitivity.npz.';
    } catch (error) {
      messages.error(`Could not save the sensitivity maps: ${error.message}`);
    }
  });

  // --- the recipe's parts ------------------------------------------------------------------

  /** A number input as the recipe wants it: absent when empty, the text when not a number. */
  const recipeNumber = (input) => {
    const v = numberOrNull(input.value);
    if (v === null) return undefined;
    return Number.isFinite(v) ? v : input.value.trim();
  };
  recipeState.register('model', {
    get: () => (active ? fText.value.trim() || null : null),
    set(value) { fText.value = value ?? fText.defaultValue; },
  });
  recipeState.register('perturbation', {
    get: () => (active ? gText.value.trim() || null : null),
    set(value) { gText.value = value ?? gText.defaultValue; },
  });
  recipeState.register('sensitivity', {
    get() {
      if (!active) return null;
      const step = {};
      const e = recipeNumber(eps);
      const g = recipeNumber(gref);
      if (e !== undefined) step.epsilon = e;
      if (g !== undefined) step.g_ref = g;
      return step;
    },
    set(value) {
      active = !!value;
      eps.value = value?.epsilon == null ? '' : String(value.epsilon);
      gref.value = value?.g_ref == null ? '' : String(value.g_ref);
    },
  });

  store.subscribe((s, keys) => {
    if (keys.has('dataset')) {
      // Maps of another series do not apply to this one.
      result = null;
      resultViews.clear('sensitivity');
      report(null);
      if (s.dataset) $('sens-gref-unit').textContent = s.dataset.velocityUnit === '1' ? '' : s.dataset.velocityUnit;
    }
    if (keys.has('dataset') || keys.has('running')) sync();
  });

  return {
    /** The last result, for tests and the console. */
    result: () => result,
    /** The selection inputs, for the modes panel's "add to f / g". */
    append(which, term) {
      const input = which === 'f' ? fText : gText;
      const now = input.value.trim();
      input.value = now ? `${now} + ${term}` : term;
      input.dispatchEvent(new Event('input', { bubbles: true }));
    },
  };
}
