// Cleaning, modes and sensitivity in the page: creates the three cards and the legend under
// the map for the views they add. `ctx` comes from main.js: {core, store, pool, messages,
// resultViews, replaceDataset, transportSettings, setView, describeFailure}.
import { createCleanPanel } from './clean_panel.js';
import { createSensitivityPanel } from './sensitivity_panel.js';
import { createModesPanel } from './modes_panel.js';

export function createAnalysis(ctx) {
  const clean = createCleanPanel(ctx);
  const sensitivity = createSensitivityPanel(ctx);
  const modes = createModesPanel(ctx, sensitivity);
  const legend = document.getElementById('result-legend');

  ctx.store.subscribe((s) => {
    const entry = ctx.resultViews.get(s.quantity);
    legend.hidden = !entry;
    legend.textContent = entry?.legend ?? '';
  });

  /** For tests and the console. */
  window.sillageAnalysis = {
    sensitivity: sensitivity.result,
    modes: modes.overview,
    pickedMode: modes.picked,
    rawKept: () => clean.raw !== null,
    /** The working series as canonical .npz bytes (the cleaned copy after cleaning). */
    workingNpz: () => ctx.store.get().dataset?.canonicalNpz() ?? null,
  };
  return { clean, sensitivity, modes };
}
