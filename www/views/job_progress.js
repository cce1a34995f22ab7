// The progress line of a job in the worker pool (cleaning, modes). Until the
// first report the bar is indeterminate and the text counts the seconds; `update` (the
// pool's onProgress: as chunks end, or as the core reports inside one long call, as the
// modes do) then shows the fraction done and the time left. It appears only for jobs longer
// than `delay` ms; its Cancel button stops the job (pool.cancel: the workers are ended and
// fresh ones started).

const $ = (id) => document.getElementById(id);

/** Wires `${prefix}-progress`, `-progress-bar`, `-progress-text` and `-cancel`. */
export function createJobProgress(prefix, { core, pool, delay = 300 }) {
  const box = $(`${prefix}-progress`);
  const bar = $(`${prefix}-progress-bar`);
  const text = $(`${prefix}-progress-text`);
  let showTimer = 0;
  let label = '';
  let tickTimer = 0;
  $(`${prefix}-cancel`).addEventListener('click', () => pool.cancel());

  return {
    /** Shows `label` (e.g. 'Cleaning') with the seconds since now, after the delay. */
    start(name) {
      label = name;
      const t0 = performance.now();
      bar.removeAttribute('value'); // indeterminate
      text.textContent = `${label}…`;
      clearTimeout(showTimer);
      clearInterval(tickTimer);
      showTimer = setTimeout(() => { box.hidden = false; }, delay);
      tickTimer = setInterval(() => {
        const seconds = (performance.now() - t0) / 1000;
        text.textContent = `${label}… ${core.formatNumber(seconds, 2)} s`;
      }, 1000);
    },
    /** From the pool's onProgress: {fraction, remaining (s)}; the ticks stop counting. */
    update({ fraction, remaining }) {
      clearInterval(tickTimer);
      bar.max = 1;
      bar.value = fraction;
      const left = Number.isFinite(remaining) ? `, about ${core.formatNumber(remaining, 2)} s left` : '';
      text.textContent = `${label}… ${core.formatNumber(100 * fraction, 3)} %${left}`;
    },
    stop() {
      clearTimeout(showTimer);
      clearInterval(tickTimer);
      box.hidden = true;
    },
  };
}
