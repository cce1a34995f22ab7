// Zoom, pan and the probe on the field map: wheel zooms about the pointer, dragging moves
// the window, the keyboard does both (+, −, arrows, 0 to reset) when the map has focus.
// Reports windows ([x0, x1, y0, y1], same aspect as the full extent) and pointer positions
// in world coordinates; the page decides what to draw and what to show.

const MAX_ZOOM = 64;
const KEY_ZOOM = 1.25;
const KEY_PAN = 0.1;

/**
 * `fieldMap` gives toWorld() and lastLayout(); `getExtent()` the full extent (or null);
 * `onWindow(window | null)` receives the new window (null = the whole extent);
 * `onProbe([x, y] | null)` the world point under the pointer.
 */
export function attachNavigation(canvas, fieldMap, { getExtent, onWindow, onProbe }) {
  let drag = null;

  function current() {
    return fieldMap.lastLayout()?.window ?? getExtent();
  }

  /** Keeps the window no larger than the extent, no smaller than 1/MAX_ZOOM of it, its centre inside. */
  function clamp(win) {
    const ext = getExtent();
    const fullW = ext[1] - ext[0];
    const fullH = ext[3] - ext[2];
    let w = Math.min(fullW, Math.max(fullW / MAX_ZOOM, win[1] - win[0]));
    const h = (w / fullW) * fullH;
    if (w >= fullW * 0.999) return null;
    let cx = Math.min(ext[1], Math.max(ext[0], (win[0] + win[1]) / 2));
    let cy = Math.min(ext[3], Math.max(ext[2], (win[2] + win[3]) / 2));
    return [cx - w / 2, cx + w / 2, cy - h / 2, cy + h / 2];
  }

  function zoomAbout(factor, [x, y]) {
    const [a, b, c, d] = current();
    onWindow(clamp([x + (a - x) * factor, x + (b - x) * factor, y + (c - y) * factor, y + (d - y) * factor]));
  }

  function pan(fx, fy) {
    const [a, b, c, d] = current();
    const dx = fx * (b - a);
    const dy = fy * (d - c);
    onWindow(clamp([a + dx, b + dx, c + dy, d + dy]));
  }

  const local = (e) => {
    const r = canvas.getBoundingClientRect();
    return [e.clientX - r.left, e.clientY - r.top];
  };

  canvas.addEventListener('wheel', (e) => {
    if (!getExtent()) return;
    const p = fieldMap.toWorld(...local(e));
    if (!p) return;
    e.preventDefault();
    zoomAbout(Math.exp(e.deltaY * 0.0015), p);
  }, { passive: false });

  canvas.addEventListener('pointerdown', (e) => {
    if (e.button !== 0 || !getExtent()) return;
    const p = fieldMap.toWorld(...local(e));
    if (!p) return;
    drag = { start: local(e), window: current() };
    canvas.setPointerCapture(e.pointerId);
    canvas.classList.add('dragging');
  });
  canvas.addEventListener('pointermove', (e) => {
    if (drag) {
      const layout = fieldMap.lastLayout();
      if (!layout) return;
      const [px, py] = local(e);
      const [a, b, c, d] = drag.window;
      const dx = ((px - drag.start[0]) / layout.box.width) * (b - a);
      const dy = ((py - drag.start[1]) / layout.box.height) * (d - c);
      onWindow(clamp([a - dx, b - dx, c + dy, d + dy]));
      return;
    }
    onProbe(fieldMap.toWorld(...local(e)));
  });
  const endDrag = (e) => {
    if (!drag) return;
    drag = null;
    canvas.classList.remove('dragging');
    if (canvas.hasPointerCapture(e.pointerId)) canvas.releasePointerCapture(e.pointerId);
  };
  canvas.addEventListener('pointerup', endDrag);
  canvas.addEventListener('pointercancel', endDrag);
  canvas.addEventListener('pointerleave', () => { if (!drag) onProbe(null); });

  canvas.addEventListener('keydown', (e) => {
    if (!getExtent()) return;
    const [a, b, c, d] = current();
    const centre = [(a + b) / 2, (c + d) / 2];
    const actions = {
      '+': () => zoomAbout(1 / KEY_ZOOM, centre),
      '=': () => zoomAbout(1 / KEY_ZOOM, centre),
      '-': () => zoomAbout(KEY_ZOOM, centre),
      _: () => zoomAbout(KEY_ZOOM, centre),
      0: () => onWindow(null),
      ArrowLeft: () => pan(-KEY_PAN, 0),
      ArrowRight: () => pan(KEY_PAN, 0),
      ArrowUp: () => pan(0, KEY_PAN),
      ArrowDown: () => pan(0, -KEY_PAN),
    };
    const act = actions[e.key];
    if (!act) return;
    e.preventDefault();
    act();
  });
}
