// The cleaning card: the core's normalized median test and gap filling (`sillage clean`)
// on the loaded series, run in the compute workers (job kind 'clean', ranges of snapshots
// with ε resolved once on the whole series) so the page stays responsive and the bar shows
// progress and time left; the workers send back the cleaned velocities and the page's core
// puts them in a copy of the series (`Dataset.withVelocity`) and joins the reports
// (`Dataset.cleanSummary`): the same series and report a cleaning in the page would give. The cleaned copy becomes the working series; the raw one is kept so that
// "Undo cleaning" brings it back. The report's figures and warning come from the core.
// The card owns the recipe's `cleaning` step: the options of the cleaning in effect (absent
// when the working series is the one as read); a recipe that says to clean cleans at once.
import * as recipeState from '../recipe_state.js';
import { JobCancelled, JobFailed } from '../compute/pool.js';
import { createJobProgress } from './job_progress.js';
import { showWarnings } from './transport_panel.js';

const $ = (id) => document.getElementById(id);

/** Text → number for the core; '' → null (the core's automatic value). */
function numberOrNull(text) {
  const t = text.trim().replace(',', '.').replace('\u2212', '-');
  return t === '' ? null : Number(t);
}

/** Settings as JSON; numbers JSON cannot hold travel as text (compute/worker.js reads them). */
function settingsJson(settings) {
  return JSON.stringify(settings, (_key, value) => (
    typeof value === 'number' && !Number.isFinite(value) ? String(value) : value));
}

export function createCleanPanel(ctx) {
  const { core, store, messages, pool } = ctx;
  const progress = createJobProgress('clean', { core, pool });
  const form = $('clean-form');
  const threshold = $('cl-threshold');
  const passes = $('cl-passes');
  const epsilon = $('cl-epsilon');
  const run = $('clean-run');
  const undo = $('clean-undo');
  const report = $('clean-report');
  const warnings = $('clean-warnings');
  const defaults = core.cleanDefaults();
  threshold.value = String(defaults.threshold);
  passes.value = String(defaults.passes);

  let raw = null; // the series as read, while a cleaned copy is the working one
  let expected = null; // the dataset this panel put in place last
  let applied = null; // {threshold, passes, epsilon} of the cleaning in effect (recipe layout)

  function setStatus(state) { document.body.dataset.clean = state; }

  function describeData(dataset) {
    if (!dataset) return;
    $('cl-epsilon-unit').textContent = dataset.velocityUnit === '1' ? '' : dataset.velocityUnit;
    const gaps = dataset.gapCount;
    if (gaps > 0) {
      report.textContent = `The series has ${gaps} missing vectors. Modes and sensitivity need `
        + 'complete snapshots: clean first.';
    } else {
      report.textContent = 'No missing vectors. Cleaning replaces spurious vectors found by the '
        + 'normalized median test.';
    }
    showWarnings(warnings, []);
  }

  function sync() {
    const s = store.get();
    run.disabled = !s.dataset || s.running;
    undo.disabled = !raw || s.running;
  }

  store.subscribe((s, keys) => {
    if (keys.has('dataset') && s.dataset !== expected) {
      // A new file was opened: the kept raw series belongs to the old one.
      raw?.free();
      raw = null;
      expected = null;
      applied = null;
      setStatus('');
      describeData(s.dataset);
    }
    if (keys.has('dataset') || keys.has('running')) sync();
  });

  /**
   * Cleans the series as read with the options in the inputs, in a compute worker. Rejects
   * with the core's reason (or JobCancelled); the working series stays as it was then.
   */
  async function cleanNow() {
    const { dataset, datasetId } = store.get();
    // Cleaning always starts from the series as read, so options do not compound. The
    // workers hold the working series: the series as read goes with the job when the
    // working one is a cleaned copy.
    const source = raw ?? dataset;
    const th = numberOrNull(threshold.value) ?? Number.NaN;
    const eps = numberOrNull(epsilon.value);
    const n = Number(passes.value.trim() || Number.NaN);
    // ε once for the whole series (the core checks the options here), then ranges of
    // snapshots on all workers: each snapshot is cleaned on its own.
    const resolved = source.cleanEpsilon(th, eps, n);
    store.set({ running: true, playing: false });
    setStatus('running');
    progress.start('Cleaning the series');
    let job;
    try {
      job = await pool.run({
        kind: 'clean',
        settings: settingsJson({ threshold: th, epsilon: resolved, passes: n }),
        rows: source.nt,
        inputs: raw ? { series: raw.canonicalNpz() } : {},
        onProgress: (p) => progress.update(p),
      });
    } finally {
      progress.stop();
      store.set({ running: false });
    }
    if (store.get().datasetId !== datasetId) throw new JobCancelled();
    const cleaned = source.withVelocity(job.arrays.u, job.arrays.v, job.arrays.gaps);
    const out = { dataset: cleaned, report: source.cleanSummary(job.info) };
    const previous = raw ? dataset : null;
    raw = source;
    expected = out.dataset;
    applied = { threshold: th, passes: n, ...(eps === null ? {} : { epsilon: eps }) };
    ctx.replaceDataset(out.dataset);
    previous?.free();
    report.textContent = `Cleaned: ${out.report.text}`;
    showWarnings(warnings, out.report.warning
      ? [{ level: 'caution', code: 'many_replaced', text: out.report.warning }] : []);
    setStatus('done');
    sync();
    recipeState.changed();
  }

  /** Says why a cleaning did not happen; the working series is unchanged. */
  function failed(error) {
    if (error instanceof JobCancelled) {
      messages.info('The cleaning was cancelled. The working series is as it was.');
      setStatus('cancelled');
    } else if (error instanceof JobFailed && error.panic) {
      messages.error('The analysis core stopped on an internal error in a compute worker:\n'
        + `${error.message}\nThat worker was restarted; the working series is as it was.`);
      setStatus('failed');
    } else {
      messages.error(ctx.describeFailure(error, 'clean the series'));
      setStatus('failed');
    }
    sync();
  }

  function undoNow() {
    const { dataset } = store.get();
    const cleaned = dataset;
    expected = raw;
    const back = raw;
    raw = null;
    applied = null;
    ctx.replaceDataset(back);
    cleaned.free();
    describeData(back);
    report.textContent = `Back to the series as read. ${report.textContent}`;
    setStatus('undone');
    sync();
    recipeState.changed();
  }

  form.addEventListener('submit', (e) => {
    e.preventDefault();
    const { dataset, running } = store.get();
    if (!dataset || running) return;
    messages.clear();
    cleanNow().catch(failed);
  });

  undo.addEventListener('click', () => {
    const { running } = store.get();
    if (!raw || running) return;
    undoNow();
  });

  recipeState.register('cleaning', {
    get: () => applied,
    set(value) {
      const { dataset, running } = store.get();
      if (!dataset) return;
      if (!value) {
        threshold.value = String(defaults.threshold);
        passes.value = String(defaults.passes);
        epsilon.value = '';
        if (raw && !running) undoNow();
        return;
      }
      threshold.value = String(value.threshold ?? defaults.threshold);
      passes.value = String(value.passes ?? defaults.passes);
      epsilon.value = value.epsilon == null ? '' : String(value.epsilon);
      const want = { threshold: Number(threshold.value), passes: Number(passes.value),
        ...(value.epsilon == null ? {} : { epsilon: value.epsilon }) };
      if (raw && JSON.stringify(want) === JSON.stringify(applied)) return; // cleaned like that already
      if (running) throw new Error('a computation is running; clean again once it has finished');
      // The recipe's later steps wait for this (recipe_state.apply awaits it).
      return cleanNow().catch((error) => {
        failed(error);
        throw error;
      });
    },
  });

  return {
    /** The kept raw series (null when the working series is not a cleaned copy). */
    get raw() { return raw; },
  };
}
