// The progress line of a whole-series job in the worker pool (cleaning, modes): the job is
// one chunk, so the pool reports nothing until it ends; the bar is indeterminate and the
// text counts the seconds. It appears only for jobs longer than `delay` ms; its Cancel
// button stops the job (pool.cancel: the worker is ended and a fresh one started).

const $ = (id) => document.getElementById(id);

/** Wires `${prefix}-progress`, `-progress-bar`, `-progress-text` and `-cancel`. */
export function createJobProgress(prefix, { core, pool, delay = 300 }) {
  const box = $(`${prefix}-progress`);
  const bar = $(`${prefix}-progress-bar`);
  const text = $(`${prefix}-progress-text`);
  let showTimer = 0;
  let tickTimer = 0;
  $(`${prefix}-cancel`).addEventListener('click', () => pool.cancel());

  return {
    /** Shows `label` (e.g. 'Cleaning') with the seconds since now, after the delay. */
    start(label) {
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
    stop() {
      clearTimeout(showTimer);
      clearInterval(tickTimer);
      box.hidden = true;
    },
  };
}
