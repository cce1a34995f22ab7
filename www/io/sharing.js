// The "Export and share" card and everything that keeps the analysis: the recipe (saved,
// opened, dropped), its copy in localStorage after every change (restored after a reload;
// the data are never stored), share links carrying the recipe in the URL fragment, and the
// exports of the map shown. The recipe is assembled from the sections of recipe_state.js
// and checked, written and packed by the core; nothing here computes.
import * as recipeState from '../recipe_state.js';
import {
  DATA_FORMATS, composePicture, describeShown, mapBytes, offerDownload, pictureLine, pngOf,
} from './export.js';

const STORAGE_KEY = 'sillage.recipe';
const FRAGMENT = /^#recipe=([A-Za-z0-9_\-+/=]*)$/;
const SAVE_DELAY = 400;

const $ = (id) => document.getElementById(id);

/** Whether a dropped or chosen FileList is a recipe (one .json file) rather than data. */
export function isRecipeFileList(files) {
  return files.length === 1 && /\.json$/i.test(files[0].name);
}

/**
 * Wires the card. `page` gives what main.js owns: {core, store, setView, isTransport,
 * quantities, transportMaps, resultViews, transportPanel, refreshWarnings, messages, readOptions(),
 * openDemo(), openFiles(files, label), embedded}.
 */
export function setupSharing(page) {
  const { core, store, messages } = page;
  let pending = null; // {recipe, origin, name}: waits for the data
  let source = null; // 'demo' | 'files' of the dataset shown
  let saving = false; // autosave is on once start() has read the stored recipe
  let saveTimer = 0;
  const status = $('share-status');
  const say = (text) => { status.textContent = text; };

  // --- the page's own sections ---------------------------------------------------------

  recipeState.register('reading', {
    get() {
      try {
        return core.recipeReading(page.readOptions());
      } catch {
        return null; // e.g. Δt being typed: the last saved recipe stays
      }
    },
    set(value) {
      $('length-unit').value = value?.length_unit ?? 'auto';
      $('time-unit').value = value?.time_unit ?? 'auto';
      $('dt').value = value?.dt == null ? '' : String(value.dt);
    },
  });

  recipeState.register('transport', {
    get() {
      if (!store.get().dataset) return pending?.recipe.transport ?? null;
      return page.transportPanel.read();
    },
    set(value) {
      const { dataset } = store.get();
      if (!dataset || !value) return;
      page.transportPanel.fill(value,
        ['These settings come from a recipe; “Use the data’s defaults” brings back the ones derived from the data.'],
        { time: dataset.timeUnit });
      page.refreshWarnings(page.transportPanel.read());
    },
  });

  recipeState.register('view', {
    get() {
      const s = store.get();
      if (!s.dataset) return pending?.recipe.view ?? null;
      return {
        source,
        quantity: s.quantity,
        scope: s.scope,
        k: s.k,
        range: s.range,
        show_ridges: s.showRidges,
        show_arrows: s.showArrows,
      };
    },
    set(value) {
      const s = store.get();
      if (!s.dataset || !value) return;
      const patch = {};
      const known = page.quantities.some((q) => q.id === value.quantity)
        || (page.isTransport(value.quantity) && s.transport);
      if (known) patch.quantity = value.quantity;
      if (value.scope === 'series' || value.scope === 'snapshot') patch.scope = value.scope;
      if (Number.isInteger(value.k) && value.k >= 0 && value.k < s.dataset.nt) patch.k = value.k;
      page.setView(patch);
      const r = value.range;
      const quantity = patch.quantity ?? s.quantity;
      if (known && !page.isTransport(quantity) && Array.isArray(r) && r.length === 2
        && r.every(Number.isFinite) && r[0] < r[1]) {
        store.set({ range: r });
      }
      for (const [key, id, flag] of [['show_ridges', 'show-ridges', 'showRidges'], ['show_arrows', 'show-arrows', 'showArrows']]) {
        if (typeof value[key] !== 'boolean') continue;
        const box = $(id);
        if (box.disabled && value[key]) continue;
        box.checked = value[key];
        store.set({ [flag]: value[key] });
      }
    },
  });

  // --- the recipe as a whole -----------------------------------------------------------

  /** The current recipe as checked JSON text (throws the core's reason when it is invalid). */
  function currentRecipe() {
    const recipe = JSON.parse(core.recipeEmpty());
    if (pending && !store.get().dataset) {
      Object.assign(recipe, pending.recipe);
      const reading = recipeState.collect().reading;
      if (reading) recipe.reading = reading;
    } else {
      Object.assign(recipe, recipeState.collect());
    }
    return core.recipeNormalize(JSON.stringify(recipe));
  }

  function saveNow() {
    try {
      localStorage.setItem(STORAGE_KEY, currentRecipe());
    } catch {
      // Settings half-typed (the core refuses them) or storage unavailable: keep the last copy.
    }
  }

  function scheduleSave() {
    if (!saving) return;
    clearTimeout(saveTimer);
    saveTimer = setTimeout(saveNow, SAVE_DELAY);
  }

  /** Applies a checked recipe now, or when the data arrive. */
  function applyRecipe(recipe, origin, name = '') {
    const before = JSON.stringify(recipeState.collect().reading ?? null);
    recipeState.apply({ reading: recipe.reading ?? null }, recipeState.names().filter((n) => n !== 'reading'));
    const readingChanged = JSON.stringify(recipeState.collect().reading ?? null) !== before;
    const s = store.get();
    if (s.dataset && readingChanged && s.files) {
      // The files must be read again with the recipe's options; the rest follows then.
      pending = { recipe, origin, name };
      $('reread').click();
      return 'reread';
    }
    if (s.dataset) {
      recipeState.apply(recipe, ['reading']).then(report);
      scheduleSave();
      return 'applied';
    }
    pending = { recipe, origin, name };
    scheduleSave();
    return 'pending';
  }

  function report(failures) {
    if (failures.length > 0) {
      messages.error(`Part of the recipe could not be applied: ${failures.map((f) => `${f.name}: ${f.error.message}`).join('; ')}`);
    }
  }

  /** Checks recipe text with the core; returns the recipe object or throws the reason. */
  function parseRecipe(text) {
    return JSON.parse(core.recipeNormalize(text));
  }

  async function openRecipeFile(file) {
    let recipe;
    try {
      recipe = parseRecipe(await file.text());
    } catch (error) {
      messages.error(`“${file.name}” cannot be used as a recipe: ${error.message}`);
      return;
    }
    const how = applyRecipe(recipe, 'file', file.name);
    if (how === 'pending') messages.info(`Recipe “${file.name}” read: it applies as soon as data are loaded (open your files, or the demo).`);
    else if (how === 'applied') { messages.info(`Recipe “${file.name}” applied.`); }
    say(`Recipe “${file.name}” opened.`);
  }

  /** Called by main.js each time a dataset has been read (after the data's defaults). */
  function datasetOpened(dataset, files) {
    source = files?.[0]?.demo ? 'demo' : 'files';
    if (pending) {
      const p = pending;
      pending = null;
      recipeState.apply(p.recipe, ['reading']).then(report);
      if (p.origin === 'storage') {
        messages.info(source === 'demo'
          ? 'Your settings from the last visit were restored, and the demo field was loaded again.'
          : 'Your restored settings were applied to these data.');
      } else if (p.origin === 'link') {
        messages.info('The settings of the share link were applied.');
      } else {
        messages.info(`Recipe “${p.name}” applied.`);
      }
    }
    scheduleSave();
  }

  // --- the controls --------------------------------------------------------------------

  const formatSelect = $('export-format');
  for (const f of DATA_FORMATS) formatSelect.add(new Option(f.label, f.id));

  function shown() {
    const s = store.get();
    const what = describeShown(core, s, {
      quantities: page.quantities, transportMaps: page.transportMaps, resultViews: page.resultViews,
    });
    if (!what) say('Nothing to export yet: open data first (and compute the FTLE for its maps).');
    return what && { s, what };
  }

  $('export-png').addEventListener('click', async () => {
    try {
      const x = shown();
      if (!x) return;
      const picture = composePicture($('field-map'), $('colorbar'),
        pictureLine(x.what, x.s.dataset.names.join(', ')));
      offerDownload(await pngOf(picture), `${x.what.stem}.png`);
      say(`Picture saved as ${x.what.stem}.png.`);
    } catch (error) {
      messages.error(`Could not make the picture: ${error.message}`);
    }
  });

  $('export-data').addEventListener('click', () => {
    try {
      const x = shown();
      if (!x) return;
      const format = formatSelect.value;
      offerDownload(mapBytes(x.s, x.what, format), `${x.what.stem}.${format}`);
      say(`${x.what.label} saved as ${x.what.stem}.${format}.`);
    } catch (error) {
      messages.error(`Could not export the map: ${error.message}`);
    }
  });

  $('export-reduced').addEventListener('click', () => {
    const { dataset } = store.get();
    if (!dataset) {
      say('Nothing to export yet: open data first.');
      return;
    }
    const k = Number($('reduced-k').value.trim());
    if (!Number.isInteger(k) || k < 1) {
      messages.error(`The number of POD modes must be a whole number of at least 1, not “${$('reduced-k').value}”.`);
      return;
    }
    say('Computing the POD…');
    // Let the note paint before the (synchronous) decomposition.
    requestAnimationFrame(() => setTimeout(() => {
      try {
        offerDownload(dataset.reducedModelNpz(k), `sillage-reduced-${k}-modes.npz`);
        say(`Reduced model saved as sillage-reduced-${k}-modes.npz.`);
      } catch (error) {
        say('');
        messages.error(`Could not make the reduced model: ${error.message}`);
      }
    }, 0));
  });

  $('recipe-save').addEventListener('click', () => {
    try {
      offerDownload(currentRecipe(), 'sillage-recipe.json');
      say('Recipe saved as sillage-recipe.json.');
    } catch (error) {
      messages.error(`The settings do not form a valid recipe yet: ${error.message}`);
    }
  });

  const recipeInput = $('recipe-input');
  $('recipe-open').addEventListener('click', () => recipeInput.click());
  recipeInput.addEventListener('change', () => {
    if (recipeInput.files.length > 0) openRecipeFile(recipeInput.files[0]);
    recipeInput.value = '';
  });

  const linkField = $('share-link');
  $('share-copy').addEventListener('click', async () => {
    let url;
    try {
      url = `${window.location.href.split('#')[0]}#recipe=${core.recipeToFragment(currentRecipe())}`;
    } catch (error) {
      messages.error(`The settings do not form a valid recipe yet: ${error.message}`);
      return;
    }
    linkField.value = url;
    linkField.hidden = false;
    try {
      await navigator.clipboard.writeText(url);
      say(`Share link copied (${url.length} characters).`);
    } catch {
      linkField.select();
      say('The browser did not allow copying: copy the link from the box.');
    }
  });

  const demoButton = $('open-demo');
  if (page.embedded) demoButton.hidden = true;
  demoButton.addEventListener('click', () => page.openDemo());
  if (page.embedded) $('standalone').hidden = true;

  // Every change of the state or of a control is saved (debounced).
  store.subscribe((_, keys) => {
    if ([...keys].some((k) => !['size', 'running', 'playing'].includes(k))) scheduleSave();
  });
  recipeState.onChange(scheduleSave);
  for (const type of ['input', 'change']) document.addEventListener(type, scheduleSave);

  window.addEventListener('hashchange', () => {
    const m = FRAGMENT.exec(window.location.hash);
    if (m) adoptFragment(m[1]);
  });

  function adoptFragment(fragment) {
    let recipe;
    try {
      recipe = parseRecipe(core.recipeFromFragment(fragment));
    } catch (error) {
      messages.error(`The settings in this link cannot be used: ${error.message}`);
      return null;
    }
    // The fragment has done its job; later edits are saved locally instead.
    try { window.history.replaceState(null, '', window.location.href.split('#')[0]); } catch { /* file:// */ }
    const how = applyRecipe(recipe, 'link');
    if (how === 'applied') messages.info('The settings of the share link were applied.');
    return recipe;
  }

  return {
    datasetOpened,
    openRecipeFile,
    /** The current recipe as checked JSON text (tests and the console). */
    recipe: () => currentRecipe(),
    /**
     * Starts the page's session: a recipe from a share link, else the one kept from the
     * last visit, else nothing; then loads the demo when that recipe (or no recipe) says so.
     */
    async start() {
      let recipe = null;
      let origin = null;
      const m = FRAGMENT.exec(window.location.hash);
      if (m) {
        recipe = adoptFragment(m[1]);
        origin = recipe && 'link';
      }
      if (!recipe) {
        let stored = null;
        try { stored = localStorage.getItem(STORAGE_KEY); } catch { /* storage unavailable */ }
        if (stored) {
          try {
            recipe = parseRecipe(stored);
            origin = 'storage';
            applyRecipe(recipe, origin);
          } catch {
            recipe = null; // written by another version: start afresh
          }
        }
      }
      saving = true;
      const useDemo = !recipe || recipe.view?.source === 'demo';
      if (useDemo && page.embedded?.data) {
        page.openFiles([{ name: page.embedded.dataName, bytes: page.embedded.data }], page.embedded.dataName);
      } else if (useDemo && page.embedded) {
        messages.info('This page file carries no data: open your velocity files (Open files…) or drop them on the page.');
      } else if (useDemo) {
        await page.openDemo();
      } else if (origin === 'storage') {
        messages.info('Your settings were restored; load your data again (Open files… or drop them on the page). Your data are never stored.');
      } else {
        messages.info('The settings of the share link were applied. The link carries no data: open your files to use them.');
      }
    },
  };
}
