// The field map: one scalar field of a dataset on a canvas, with axes and a title.
//
// Data contract: `dataset.render(quantity, k, lo, hi)` gives nx × ny RGBA bytes, first row
// = largest y; `dataset.extent()` gives the rectangle [x_min, x_max, y_min, y_max] the
// picture covers. x and y get the same scale (a square cell stays square), y points up.
// Tick values and labels come from the core; this view only places them.
import { fitCanvas, toImageData, FONT, TITLE_FONT, INK, INK_SOFT } from './canvas.js';

const MARGIN = { top: 30, right: 14, bottom: 46, left: 64 };
/** The plot may use at most this share of the window height, so controls stay in view. */
const MAX_HEIGHT_SHARE = 0.66;
const MIN_PLOT_HEIGHT = 120;
/** Roughly one tick label per this many CSS pixels of axis. */
const PX_PER_TICK = 90;
const TICK_LENGTH = 5;

function axisTitle(name, unit, scale) {
  const parts = [scale, unit === '1' ? '' : unit].filter(Boolean).join(' ');
  return parts ? `${name} (${parts})` : name;
}

export function createFieldMap(canvas, core) {
  const picture = document.createElement('canvas');
  let pictureKey = '';

  /** Puts the field's pixels into the offscreen picture, unless they are already there. */
  function paintPicture(view) {
    const { dataset, datasetId, quantity, k, range } = view;
    const key = `${datasetId}|${quantity}|${k}|${range[0]}|${range[1]}`;
    if (key === pictureKey) return;
    const rgba = dataset.render(quantity, k, range[0], range[1]);
    picture.width = dataset.nx;
    picture.height = dataset.ny;
    picture.getContext('2d').putImageData(toImageData(rgba, dataset.nx, dataset.ny), 0, 0);
    pictureKey = key;
  }

  /** Plot rectangle (CSS px) for the available width and the extent's aspect ratio. */
  function layout(width, extent) {
    const [x0, x1, y0, y1] = extent;
    const aspect = (y1 - y0) / (x1 - x0);
    let plotWidth = Math.max(1, width - MARGIN.left - MARGIN.right);
    let plotHeight = plotWidth * aspect;
    const maxHeight = Math.max(MIN_PLOT_HEIGHT,
      window.innerHeight * MAX_HEIGHT_SHARE - MARGIN.top - MARGIN.bottom);
    if (plotHeight > maxHeight) {
      plotHeight = maxHeight;
      plotWidth = plotHeight / aspect;
    }
    return {
      left: MARGIN.left,
      top: MARGIN.top,
      width: plotWidth,
      height: plotHeight,
      cssWidth: MARGIN.left + plotWidth + MARGIN.right,
      cssHeight: MARGIN.top + plotHeight + MARGIN.bottom,
    };
  }

  function drawAxes(ctx, box, extent, dataset) {
    const [x0, x1, y0, y1] = extent;
    ctx.strokeStyle = INK_SOFT;
    ctx.lineWidth = 1;
    ctx.strokeRect(box.left - 0.5, box.top - 0.5, box.width + 1, box.height + 1);
    ctx.font = FONT;
    ctx.fillStyle = INK;

    const xt = core.ticks(x0, x1, Math.max(2, Math.round(box.width / PX_PER_TICK)));
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    ctx.beginPath();
    for (const t of xt.ticks) {
      const px = Math.round(box.left + t.frac * box.width) + 0.5;
      ctx.moveTo(px, box.top + box.height);
      ctx.lineTo(px, box.top + box.height + TICK_LENGTH);
      ctx.fillText(t.label, px, box.top + box.height + TICK_LENGTH + 2);
    }
    const yt = core.ticks(y0, y1, Math.max(2, Math.round(box.height / PX_PER_TICK)));
    ctx.textAlign = 'right';
    ctx.textBaseline = 'middle';
    for (const t of yt.ticks) {
      const py = Math.round(box.top + (1 - t.frac) * box.height) + 0.5;
      ctx.moveTo(box.left, py);
      ctx.lineTo(box.left - TICK_LENGTH, py);
      ctx.fillText(t.label, box.left - TICK_LENGTH - 3, py);
    }
    ctx.stroke();

    ctx.fillStyle = INK_SOFT;
    ctx.textAlign = 'center';
    ctx.textBaseline = 'bottom';
    ctx.fillText(axisTitle('x', dataset.lengthUnit, xt.scale),
      box.left + box.width / 2, box.top + box.height + MARGIN.bottom - 2);
    ctx.save();
    ctx.translate(14, box.top + box.height / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textBaseline = 'middle';
    ctx.fillText(axisTitle('y', dataset.lengthUnit, yt.scale), 0, 0);
    ctx.restore();
  }

  return {
    /**
     * Draws `view` ({dataset, datasetId, quantity, quantityLabel, k, range}) into `width`
     * CSS pixels; returns the plot box so the colour bar can line up with it.
     */
    draw(view, width) {
      const { dataset, k } = view;
      const extent = dataset.extent();
      const box = layout(width, extent);
      paintPicture(view);
      const ctx = fitCanvas(canvas, box.cssWidth, box.cssHeight);
      // One grid cell per block of pixels: smoothing would invent values between nodes
      // and blur the mask's outline.
      ctx.imageSmoothingEnabled = false;
      ctx.drawImage(picture, box.left, box.top, box.width, box.height);
      drawAxes(ctx, box, extent, dataset);

      const time = dataset.timeLabel(k);
      ctx.font = TITLE_FONT;
      ctx.fillStyle = INK;
      ctx.textBaseline = 'alphabetic';
      ctx.textAlign = 'left';
      ctx.fillText(view.quantityLabel, box.left, box.top - 10);
      ctx.font = FONT;
      ctx.fillStyle = INK_SOFT;
      ctx.textAlign = 'right';
      ctx.fillText(`t = ${time}`, box.left + box.width, box.top - 10);

      const lo = core.formatNumber(view.range[0], 3);
      const hi = core.formatNumber(view.range[1], 3);
      const unit = view.unit === '1' ? '' : ` ${view.unit}`;
      canvas.setAttribute('aria-label',
        `${view.quantityLabel} at t = ${time}, colours from ${lo} to ${hi}${unit}`);
      return box;
    },
  };
}
