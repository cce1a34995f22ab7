// Canvas helpers shared by the views: a backing store that matches the device's pixels.

/**
 * Sizes `canvas` to `cssWidth` × `cssHeight` CSS pixels with a backing store of
 * devicePixelRatio times that, and returns a 2D context whose units are CSS pixels.
 */
export function fitCanvas(canvas, cssWidth, cssHeight) {
  const ratio = window.devicePixelRatio || 1;
  const w = Math.max(1, Math.round(cssWidth * ratio));
  const h = Math.max(1, Math.round(cssHeight * ratio));
  if (canvas.width !== w) canvas.width = w;
  if (canvas.height !== h) canvas.height = h;
  canvas.style.width = `${cssWidth}px`;
  canvas.style.height = `${cssHeight}px`;
  const ctx = canvas.getContext('2d');
  ctx.setTransform(ratio, 0, 0, ratio, 0, 0);
  ctx.clearRect(0, 0, cssWidth, cssHeight);
  return ctx;
}

/** Calls `fn` whenever devicePixelRatio changes (moving the window to another screen, zoom). */
export function onPixelRatioChange(fn) {
  let query;
  const arm = () => {
    query = window.matchMedia(`(resolution: ${window.devicePixelRatio}dppx)`);
    query.addEventListener('change', () => { arm(); fn(); }, { once: true });
  };
  arm();
}

/** RGBA bytes from the core as ImageData, without copying. */
export function toImageData(rgba, width, height) {
  return new ImageData(new Uint8ClampedArray(rgba.buffer, rgba.byteOffset, rgba.length), width, height);
}

export const FONT = '12px system-ui, -apple-system, "Segoe UI", Roboto, Arial, sans-serif';
export const TITLE_FONT = '600 13px system-ui, -apple-system, "Segoe UI", Roboto, Arial, sans-serif';
export const INK = '#1b2733';
export const INK_SOFT = '#55626f';
