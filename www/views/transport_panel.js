// The transport panel: the settings of an FTLE run as form controls, filled from the
// defaults the core derives from the data, the core's warnings for the current settings,
// and the Compute button. Reads and writes settings objects in the core's JSON layout
// (TransportSettings); decides nothing itself.

const $ = (id) => document.getElementById(id);

const LEVEL_WORD = { note: 'Note.', caution: 'Caution.', refuse: 'Cannot run:' };

/** Fills `list` (a <ul>) with warnings [{level, code, text}]. */
export function showWarnings(list, warnings) {
  list.replaceChildren(...warnings.map((w) => {
    const li = document.createElement('li');
    li.className = w.level;
    li.dataset.code = w.code;
    const level = document.createElement('span');
    level.className = 'level';
    level.textContent = LEVEL_WORD[w.level] ?? '';
    li.append(level, document.createTextNode(w.text));
    return li;
  }));
}

/**
 * Wires the panel. `onChange(settings)` runs after every edit (the page asks the core for
 * warnings), `onCompute(settings)` on submit, `onDefaults()` on the defaults button.
 */
export function createTransportPanel({ onChange, onCompute, onDefaults }) {
  const form = $('transport-form');
  const ids = ['t0', 'horizon', 'direction', 'nx', 'ny', 'integrator', 'step', 'boundary', 'route', 'space', 'time'];
  const el = Object.fromEntries(ids.map((id) => [id, $(`tr-${id}`)]));
  const button = $('compute-ftle');
  const warningsList = $('transport-warnings');
  const notesList = $('transport-notes');
  let region = null;
  let enabled = false;
  let refused = false;

  /** Text → number; '' or not a number stays as the text so the core names the problem. */
  const num = (text) => {
    const t = text.trim().replace(',', '.').replace('\u2212', '-');
    const v = Number(t);
    return t !== '' && Number.isFinite(v) ? v : t;
  };

  function read() {
    const s = {
      t0: num(el.t0.value),
      horizon: num(el.horizon.value),
      direction: el.direction.value,
      grid: [num(el.nx.value), num(el.ny.value)],
      integrator: el.integrator.value,
      boundary: el.boundary.value,
      route: el.route.value,
      space: el.space.value,
      time: el.time.value,
    };
    if (el.integrator.value === 'rk4') s.step = num(el.step.value);
    if (region) s.region = region;
    return s;
  }

  function syncDisabled() {
    el.step.disabled = el.integrator.value !== 'rk4';
    button.disabled = !enabled || refused;
  }

  form.addEventListener('input', () => { syncDisabled(); onChange(read()); });
  form.addEventListener('change', () => { syncDisabled(); onChange(read()); });
  form.addEventListener('submit', (e) => {
    e.preventDefault();
    if (!button.disabled) onCompute(read());
  });
  $('transport-defaults').addEventListener('click', () => onDefaults());

  return {
    read,
    /** Fills the controls from a settings object and shows the notes behind it. */
    fill(settings, notes, units) {
      el.t0.value = String(settings.t0);
      el.horizon.value = String(settings.horizon);
      el.direction.value = settings.direction ?? 'forward';
      el.nx.value = String(settings.grid[0]);
      el.ny.value = String(settings.grid[1]);
      el.integrator.value = settings.integrator ?? 'rk4';
      el.step.value = settings.step == null ? '' : String(settings.step);
      el.boundary.value = settings.boundary ?? 'stop';
      el.route.value = settings.route ?? 'variational';
      el.space.value = settings.space ?? 'bilinear';
      el.time.value = settings.time ?? 'linear';
      region = settings.region ?? null;
      for (const span of form.querySelectorAll('.unit[data-unit="time"]')) {
        span.textContent = units.time === '1' ? '' : units.time;
      }
      notesList.replaceChildren(...notes.map((n) => {
        const li = document.createElement('li');
        li.textContent = n;
        return li;
      }));
      syncDisabled();
    },
    /** Shows warnings; a 'refuse' among them disables Compute. */
    warnings(list) {
      refused = list.some((w) => w.level === 'refuse');
      showWarnings(warningsList, list);
      syncDisabled();
    },
    /** Enables or disables Compute (no dataset, or a run in progress). */
    setEnabled(on) {
      enabled = on;
      syncDisabled();
    },
  };
}
