// The colour bar: the colour map of the field shown, with tick labels from the core, the
// field's name and unit along its side and a "no data" swatch below. Lines up with the field
// map's plot box.
import { fitCanvas, toImageData, FONT, TITLE_FONT, INK, INK_SOFT } from './canvas.js';

const BAR_WIDTH = 16;
const TICK_LENGTH = 4;
const GAP = 4;
const PAD_RIGHT = 6;
const PX_PER_TICK = 46;
const SWATCH = 12;
/** Room for the rotated title beside the tick labels. */
const TITLE_BAND = 20;

export function createColorbar(canvas, core) {
  const strip = document.createElement('canvas');
  let stripMap = '';

  function paintStrip(colormap) {
    if (colormap === stripMap) return;
    // 1 × 256 picture, high end at the top.
    const rgba = core.colormapRgba(colormap);
    const flipped = new Uint8Array(rgba.length);
    for (let i = 0; i < 256; i += 1) flipped.set(rgba.subarray(4 * i, 4 * i + 4), 4 * (255 - i));
    strip.width = 1;
    strip.height = 256;
    strip.getContext('2d').putImageData(toImageData(flipped, 1, 256), 0, 0);
    stripMap = colormap;
  }

  return {
    /**
     * Draws the bar for `view` ({colormap, range, unit, quantityLabel}) next to a plot `box`
     * ({top, height, cssHeight} from the field map). Returns the width used (CSS px).
     */
    draw(view, box) {
      const ticks = core.ticks(view.range[0], view.range[1],
        Math.max(2, Math.round(box.height / PX_PER_TICK)));
      const unit = [ticks.scale, view.unit === '1' ? '' : view.unit].filter(Boolean).join(' ');
      const title = unit ? `${view.quantityLabel} (${unit})` : view.quantityLabel;
      const measure = canvas.getContext('2d');
      measure.font = FONT;
      const labelWidth = Math.max(0, ...ticks.ticks.map((t) => measure.measureText(t.label).width));
      const labelsRight = BAR_WIDTH + TICK_LENGTH + GAP + labelWidth;
      const width = Math.ceil(Math.max(
        labelsRight + TITLE_BAND,
        SWATCH + GAP + measure.measureText('no data').width + 2,
      )) + PAD_RIGHT;

      paintStrip(view.colormap);
      const ctx = fitCanvas(canvas, width, box.cssHeight);
      ctx.imageSmoothingEnabled = false;
      ctx.drawImage(strip, 0, box.top, BAR_WIDTH, box.height);
      ctx.strokeStyle = INK_SOFT;
      ctx.lineWidth = 1;
      ctx.strokeRect(0.5, box.top - 0.5, BAR_WIDTH - 1, box.height + 1);

      ctx.save();
      ctx.font = TITLE_FONT;
      ctx.fillStyle = INK;
      ctx.textAlign = 'center';
      ctx.textBaseline = 'middle';
      ctx.translate(labelsRight + TITLE_BAND / 2 + 2, box.top + box.height / 2);
      ctx.rotate(-Math.PI / 2);
      ctx.fillText(title, 0, 0);
      ctx.restore();

      ctx.font = FONT;
      ctx.fillStyle = INK;
      ctx.textAlign = 'left';
      ctx.textBaseline = 'middle';
      ctx.beginPath();
      for (const t of ticks.ticks) {
        const y = Math.round(box.top + (1 - t.frac) * box.height) + 0.5;
        ctx.moveTo(BAR_WIDTH, y);
        ctx.lineTo(BAR_WIDTH + TICK_LENGTH, y);
        ctx.fillText(t.label, BAR_WIDTH + TICK_LENGTH + GAP, y);
      }
      ctx.stroke();

      const [r, g, b] = core.maskColor();
      const swatchTop = box.top + box.height + 14;
      ctx.fillStyle = `rgb(${r}, ${g}, ${b})`;
      ctx.fillRect(0, swatchTop, SWATCH, SWATCH);
      ctx.fillStyle = INK_SOFT;
      ctx.fillText('no data', SWATCH + GAP + 2, swatchTop + SWATCH / 2);

      canvas.setAttribute('aria-label',
        `Colour scale of ${title}: ${ticks.ticks.map((t) => t.label).join(', ')}`);
      return width;
    },
  };
}
