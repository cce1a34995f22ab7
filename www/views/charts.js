// Small charts drawn on a canvas: the core describes each chart completely (curves, axis
// ranges, labels; crate/src/modes/overview.rs) and supplies the tick values and labels;
// this module only maps numbers to pixels and finds the point under a click.
//
// Why canvas and not a plotting library: see DEVELOPERS.md ("Charts").
import { fitCanvas, FONT, TITLE_FONT, INK, INK_SOFT } from './canvas.js';

const PAD = { left: 58, right: 14, top: 26, bottom: 40 };
const COLORS = ['#1d5f8a', '#c0392b', '#7a8a99', '#2e8b57'];
const PICKED = '#e0a100';
const PICK_RADIUS = 10;

/**
 * Draws `chart` ({title, x_label, y_label, x_range, y_range, equal_aspect, curves}) on
 * `canvas`, `width` CSS px wide, with ticks from `core`. `picked` (an index of a curve's
 * `picks`) is highlighted. Returns a hit-tester: (cssX, cssY) → pick index or null.
 */
export function drawChart(canvas, core, chart, { width, height = 220, picked = null } = {}) {
  let plotW = width - PAD.left - PAD.right;
  let plotH = height - PAD.top - PAD.bottom;
  if (chart.equal_aspect) {
    const side = Math.min(plotW, plotH);
    plotW = side;
    plotH = side;
  }
  const ctx = fitCanvas(canvas, width, height);
  const [x0, x1] = chart.x_range;
  const [y0, y1] = chart.y_range;
  const px = (x) => PAD.left + ((x - x0) / (x1 - x0)) * plotW;
  const py = (y) => PAD.top + (1 - (y - y0) / (y1 - y0)) * plotH;

  ctx.font = TITLE_FONT;
  ctx.fillStyle = INK;
  ctx.textAlign = 'left';
  ctx.textBaseline = 'alphabetic';
  ctx.fillText(chart.title, PAD.left, PAD.top - 10);

  // Axes and ticks (values and labels from the core).
  ctx.font = FONT;
  ctx.strokeStyle = '#d8dee4';
  ctx.lineWidth = 1;
  const xt = core.ticks(x0, x1, Math.max(2, Math.round(plotW / 80)));
  const yt = core.ticks(y0, y1, Math.max(2, Math.round(plotH / 40)));
  ctx.beginPath();
  for (const t of xt.ticks) {
    const x = Math.round(PAD.left + t.frac * plotW) + 0.5;
    ctx.moveTo(x, PAD.top);
    ctx.lineTo(x, PAD.top + plotH);
  }
  for (const t of yt.ticks) {
    const y = Math.round(PAD.top + (1 - t.frac) * plotH) + 0.5;
    ctx.moveTo(PAD.left, y);
    ctx.lineTo(PAD.left + plotW, y);
  }
  ctx.stroke();
  ctx.strokeStyle = INK_SOFT;
  ctx.strokeRect(PAD.left + 0.5, PAD.top + 0.5, plotW, plotH);
  ctx.fillStyle = INK_SOFT;
  ctx.textAlign = 'center';
  ctx.textBaseline = 'top';
  for (const t of xt.ticks) ctx.fillText(t.label, PAD.left + t.frac * plotW, PAD.top + plotH + 4);
  ctx.textAlign = 'right';
  ctx.textBaseline = 'middle';
  for (const t of yt.ticks) ctx.fillText(t.label, PAD.left - 5, PAD.top + (1 - t.frac) * plotH);
  ctx.fillStyle = INK;
  ctx.textAlign = 'center';
  ctx.textBaseline = 'bottom';
  const xs = xt.scale ? ` ${xt.scale}` : '';
  ctx.fillText(`${chart.x_label}${xs}`, PAD.left + plotW / 2, height - 4);
  ctx.save();
  ctx.translate(12, PAD.top + plotH / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.textBaseline = 'middle';
  const ys = yt.scale ? ` ${yt.scale}` : '';
  ctx.fillText(`${chart.y_label}${ys}`, 0, 0);
  ctx.restore();

  // Curves, clipped to the plot.
  ctx.save();
  ctx.beginPath();
  ctx.rect(PAD.left, PAD.top, plotW, plotH);
  ctx.clip();
  const targets = [];
  chart.curves.forEach((c, i) => {
    const color = COLORS[i % COLORS.length];
    ctx.strokeStyle = color;
    ctx.fillStyle = color;
    ctx.lineWidth = 1.5;
    const n = c.x.length;
    if (c.style === 'line') {
      ctx.beginPath();
      for (let k = 0; k < n; k += 1) {
        if (k === 0) ctx.moveTo(px(c.x[k]), py(c.y[k]));
        else ctx.lineTo(px(c.x[k]), py(c.y[k]));
      }
      ctx.stroke();
    } else if (c.style === 'bars') {
      const w = Math.max(1, (0.7 * plotW) / Math.max(1, x1 - x0));
      for (let k = 0; k < n; k += 1) {
        const top = py(c.y[k]);
        const base = py(Math.max(y0, 0));
        ctx.fillStyle = c.picks && c.picks[k] === picked ? PICKED : color;
        ctx.fillRect(px(c.x[k]) - w / 2, top, w, base - top);
      }
    } else {
      for (let k = 0; k < n; k += 1) {
        const x = px(c.x[k]);
        const y = py(c.y[k]);
        if (c.style === 'stems') {
          ctx.beginPath();
          ctx.moveTo(x, py(Math.max(y0, 0)));
          ctx.lineTo(x, y);
          ctx.stroke();
        }
        const on = c.picks && c.picks[k] === picked;
        ctx.fillStyle = on ? PICKED : color;
        ctx.beginPath();
        ctx.arc(x, y, on ? 5 : 3.2, 0, 2 * Math.PI);
        ctx.fill();
      }
    }
    if (c.picks) {
      for (let k = 0; k < n; k += 1) targets.push({ x: px(c.x[k]), y: py(c.y[k]), pick: c.picks[k] });
    }
  });
  ctx.restore();

  // Legend of the named curves, top right inside the plot.
  ctx.font = FONT;
  ctx.textAlign = 'right';
  ctx.textBaseline = 'top';
  chart.curves.forEach((c, i) => {
    ctx.fillStyle = COLORS[i % COLORS.length];
    ctx.fillText(c.label, PAD.left + plotW - 6, PAD.top + 4 + 14 * i);
  });

  canvas.setAttribute('aria-label', `${chart.title}: ${chart.x_label} against ${chart.y_label}`);
  return (cx, cy) => {
    let best = null;
    let dist = PICK_RADIUS;
    for (const t of targets) {
      const d = Math.hypot(t.x - cx, t.y - cy);
      if (d <= dist) {
        dist = d;
        best = t.pick;
      }
    }
    // Bars: a click anywhere in the column picks it.
    if (best === null && chart.curves.some((c) => c.style === 'bars')) {
      for (const t of targets) {
        if (Math.abs(t.x - cx) <= 4 && cy >= PAD.top && cy <= PAD.top + plotH) return t.pick;
      }
    }
    return best;
  };
}
