// Exports of what the page shows: a PNG picture of the map with its colour bar and a line
// of text (quantity, unit, time), and the map's numbers as .npy, .npz, .csv or .vti. The
// file bytes of the numbers are written by the core; the picture is the page's own two
// canvases (whose labels and ticks come from the core) put side by side. Files reach the
// user as downloads of Blobs: nothing goes over the network.
import { FONT, INK_SOFT } from '../views/canvas.js';

/** The data formats offered, in menu order: [{id, label}]. */
export const DATA_FORMATS = [
  { id: 'npz', label: '.npz (map, x, y, mask, units)' },
  { id: 'npy', label: '.npy (map only)' },
  { id: 'csv', label: '.csv (x, y, value)' },
  { id: 'vti', label: '.vti (VTK image data)' },
];

const MIME = {
  npz: 'application/zip',
  npy: 'application/octet-stream',
  csv: 'text/csv',
  vti: 'application/xml',
  json: 'application/json',
  png: 'image/png',
};

/** Offers `data` (a Blob, Uint8Array or string) as a download named `filename`. */
export function offerDownload(data, filename) {
  const ext = filename.split('.').pop();
  const blob = data instanceof Blob ? data : new Blob([data], { type: MIME[ext] ?? 'application/octet-stream' });
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = filename;
  a.hidden = true;
  document.body.append(a);
  a.click();
  a.remove();
  // Late enough for the browser to have read the Blob.
  setTimeout(() => URL.revokeObjectURL(url), 60000);
}

/** A file-name part from a label: letters, digits and dashes. */
function slug(text) {
  return String(text).normalize('NFKD').replace(/[^A-Za-z0-9]+/g, '-').replace(/^-|-$/g, '').toLowerCase();
}

/**
 * What the page shows for state `s`: {kind: 'series'|'transport'|'result', id, label, unit,
 * when, stem, entry?} or null when nothing is drawn. `maps` = {quantities, transportMaps} of
 * the core and the page's `resultViews` (maps added by the cards: sensitivity, mode shape).
 */
export function describeShown(core, s, maps) {
  if (!s.dataset || !s.range) return null;
  const transport = maps.transportMaps.find((m) => m.id === s.quantity);
  if (transport) {
    const t = s.transport;
    if (!t) return null;
    const unit = s.dataset.transportUnit(s.quantity);
    const tu = s.dataset.timeUnit === '1' ? '' : ` ${s.dataset.timeUnit}`;
    const when = `t₀ = ${core.formatNumber(t.settings.t0, 4)}${tu}, ${t.settings.direction}, `
      + `|T| = ${core.formatNumber(t.settings.horizon, 3)}${tu}`;
    return { kind: 'transport', id: s.quantity, label: transport.label, unit, when, stem: `sillage-${slug(s.quantity)}` };
  }
  const entry = maps.resultViews?.get(s.quantity);
  if (entry) {
    return {
      kind: 'result',
      id: s.quantity,
      label: entry.label,
      unit: entry.unit ?? '1',
      when: entry.when ?? '',
      stem: `sillage-${slug(entry.stem ?? s.quantity)}`,
      entry,
    };
  }
  const q = maps.quantities.find((x) => x.id === s.quantity);
  if (!q) return null;
  return {
    kind: 'series',
    id: s.quantity,
    label: q.label,
    unit: s.dataset.unit(s.quantity),
    when: `t = ${s.dataset.timeLabel(s.k)} (snapshot ${s.dataset.snapshotLabel(s.k)})`,
    stem: `sillage-${slug(s.quantity)}-${String(s.k).padStart(4, '0')}`,
  };
}

/** The map's numbers as file bytes in `format`, written by the core. */
export function mapBytes(s, shown, format) {
  if (shown.kind === 'result') {
    if (!shown.entry.exportBytes) {
      throw new Error(`the numbers of “${shown.label}” cannot be saved from here; its picture can`);
    }
    return shown.entry.exportBytes(format);
  }
  if (shown.kind === 'transport') {
    const t = s.transport;
    const values = shown.id === 'ftle' ? t.arrays.ftle : t.arrays.tau;
    return s.dataset.exportTransport(shown.id, t.settings, values, t.arrays.flag, format);
  }
  return s.dataset.exportField(shown.id, s.k, format);
}

/**
 * The picture: the field map canvas and the colour bar canvas side by side (both at the
 * screen's pixel density) on white, and one line of text under them.
 */
export function composePicture(mapCanvas, barCanvas, line) {
  const ratio = mapCanvas.width / (parseFloat(mapCanvas.style.width) || mapCanvas.width) || 1;
  const pad = Math.round(10 * ratio);
  const lineHeight = Math.round(22 * ratio);
  const out = document.createElement('canvas');
  const ctx0 = out.getContext('2d');
  ctx0.font = FONT;
  const textWidth = Math.ceil(ctx0.measureText(line).width * ratio) + 2 * pad;
  out.width = Math.max(mapCanvas.width + barCanvas.width + pad, textWidth);
  out.height = Math.max(mapCanvas.height, barCanvas.height) + lineHeight + pad;
  const ctx = out.getContext('2d');
  ctx.fillStyle = '#ffffff';
  ctx.fillRect(0, 0, out.width, out.height);
  ctx.drawImage(mapCanvas, 0, 0);
  ctx.drawImage(barCanvas, mapCanvas.width, 0);
  ctx.scale(ratio, ratio);
  ctx.font = FONT;
  ctx.fillStyle = INK_SOFT;
  ctx.textBaseline = 'alphabetic';
  ctx.fillText(line, pad / ratio, (out.height - pad) / ratio - 4);
  return out;
}

/** PNG bytes of a canvas, as a Blob. */
export function pngOf(canvas) {
  return new Promise((resolve, reject) => {
    canvas.toBlob((blob) => (blob ? resolve(blob) : reject(new Error('the browser could not encode the PNG'))), 'image/png');
  });
}

/** The text line under the exported picture. */
export function pictureLine(shown, sourceLabel) {
  const unit = shown.unit === '1' ? '' : ` (${shown.unit})`;
  return [`${shown.label}${unit}`, shown.when, sourceLabel].filter(Boolean).join(' · ');
}
