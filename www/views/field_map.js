// The field map: one scalar field on a canvas, with axes, a title, optional overlays
// (FTLE ridges, velocity arrows) and a visible window for zoom and pan.
//
// Data contract: `view.picture` = {key, nx, ny, extent, paint()} where paint() gives nx × ny
// RGBA bytes, first row = largest y, covering the rectangle `extent` [x_min, x_max, y_min,
// y_max]. The plot box keeps the aspect of `view.extent` (the whole data picture); `view.window`
// (same layout) is the part shown. x and y get the same scale, y points up. Tick values and
// labels come from the core; this view only places them.
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
  let last = null; // {box, window} of the last drawing

  /** Puts the field's pixels into the offscreen picture, unless they are already there. */
  function paintPicture(p) {
    if (p.key === pictureKey) return;
    const rgba = p.paint();
    picture.width = p.nx;
    picture.height = p.ny;
    picture.getContext('2d').putImageData(toImageData(rgba, p.nx, p.ny), 0, 0);
    pictureKey = p.key;
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

  /** World → CSS px of the canvas for a box and a visible window. */
  function projector(box, win) {
    const [w0, w1, w2, w3] = win;
    return {
      x: (x) => box.left + ((x - w0) / (w1 - w0)) * box.width,
      y: (y) => box.top + ((w3 - y) / (w3 - w2)) * box.height,
    };
  }

  function drawAxes(ctx, box, win, lengthUnit) {
    const [x0, x1, y0, y1] = win;
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
    ctx.fillText(axisTitle('x', lengthUnit, xt.scale),
      box.left + box.width / 2, box.top + box.height + MARGIN.bottom - 2);
    ctx.save();
    ctx.translate(14, box.top + box.height / 2);
    ctx.rotate(-Math.PI / 2);
    ctx.textBaseline = 'middle';
    ctx.fillText(axisTitle('y', lengthUnit, yt.scale), 0, 0);
    ctx.restore();
  }

  /** Ridge polylines ([[x0, y0, x1, y1, …]] in world units): a light line with a dark rim. */
  function drawRidges(ctx, proj, ridges) {
    ctx.lineJoin = 'round';
    ctx.lineCap = 'round';
    for (const [width, colour] of [[3.2, 'rgba(10, 20, 30, 0.6)'], [1.4, '#ffffff']]) {
      ctx.lineWidth = width;
      ctx.strokeStyle = colour;
      ctx.beginPath();
      for (const line of ridges) {
        for (let i = 0; i + 1 < line.length; i += 2) {
          const px = proj.x(line[i]);
          const py = proj.y(line[i + 1]);
          if (i === 0) ctx.moveTo(px, py);
          else ctx.lineTo(px, py);
        }
      }
      ctx.stroke();
    }
  }

  /** Arrows [x, y, dx, dy, …] (world units) with small heads. */
  function drawArrows(ctx, proj, arrows) {
    const scale = proj.x(1) - proj.x(0); // px per length unit (same on both axes)
    ctx.lineCap = 'round';
    for (const [width, colour] of [[2.6, 'rgba(255, 255, 255, 0.7)'], [1.1, INK]]) {
      ctx.lineWidth = width;
      ctx.strokeStyle = colour;
      ctx.beginPath();
      for (let i = 0; i + 3 < arrows.length; i += 4) {
        const x0 = proj.x(arrows[i]);
        const y0 = proj.y(arrows[i + 1]);
        const dx = arrows[i + 2] * scale;
        const dy = -arrows[i + 3] * scale;
        const len = Math.hypot(dx, dy);
        if (len < 0.5) continue;
        const x1 = x0 + dx;
        const y1 = y0 + dy;
        ctx.moveTo(x0, y0);
        ctx.lineTo(x1, y1);
        const head = Math.min(5, 0.35 * len);
        const ux = dx / len;
        const uy = dy / len;
        ctx.moveTo(x1 - head * (ux - 0.5 * uy), y1 - head * (uy + 0.5 * ux));
        ctx.lineTo(x1, y1);
        ctx.lineTo(x1 - head * (ux + 0.5 * uy), y1 - head * (uy - 0.5 * ux));
      }
      ctx.stroke();
    }
  }

  return {
    /**
     * Draws `view` into `width` CSS pixels: {picture, extent, window, lengthUnit, title,
     * caption, ariaLabel, ridges, arrows}. Returns the plot box so the colour bar can line
     * up with it.
     */
    draw(view, width) {
      const box = layout(width, view.extent);
      const win = view.window ?? view.extent;
      paintPicture(view.picture);
      const ctx = fitCanvas(canvas, box.cssWidth, box.cssHeight);
      const proj = projector(box, win);
      const [p0, p1, p2, p3] = view.picture.extent;
      ctx.save();
      ctx.beginPath();
      ctx.rect(box.left, box.top, box.width, box.height);
      ctx.clip();
      // One grid cell per block of pixels: smoothing would invent values between nodes
      // and blur the mask's outline.
      ctx.imageSmoothingEnabled = false;
      ctx.drawImage(picture, proj.x(p0), proj.y(p3), proj.x(p1) - proj.x(p0), proj.y(p2) - proj.y(p3));
      if (view.arrows) drawArrows(ctx, proj, view.arrows);
      if (view.ridges) drawRidges(ctx, proj, view.ridges);
      ctx.restore();
      drawAxes(ctx, box, win, view.lengthUnit);

      ctx.font = TITLE_FONT;
      ctx.fillStyle = INK;
      ctx.textBaseline = 'alphabetic';
      ctx.textAlign = 'left';
      ctx.fillText(view.title, box.left, box.top - 10);
      ctx.font = FONT;
      ctx.fillStyle = INK_SOFT;
      ctx.textAlign = 'right';
      ctx.fillText(view.caption, box.left + box.width, box.top - 10);
      canvas.setAttribute('aria-label', view.ariaLabel);
      last = { box, window: win };
      return box;
    },
    /** World coordinates [x, y] under CSS pixel (px, py) of the canvas; null outside the plot. */
    toWorld(px, py) {
      if (!last) return null;
      const { box, window: [w0, w1, w2, w3] } = last;
      const fx = (px - box.left) / box.width;
      const fy = (py - box.top) / box.height;
      if (fx < 0 || fx > 1 || fy < 0 || fy > 1) return null;
      return [w0 + fx * (w1 - w0), w3 - fy * (w3 - w2)];
    },
    /** Plot width in CSS px and the window drawn last (for panning by pixels). */
    lastLayout() { return last; },
  };
}
