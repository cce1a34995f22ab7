// Time: the snapshot slider, the play/pause button and the time label. Reports the user's
// choices through callbacks; shows what the state says.

export function createTimeControl({ slider, button, label, onSnapshot, onPlay }) {
  slider.addEventListener('input', () => onSnapshot(Number(slider.value)));
  button.addEventListener('click', () => onPlay(button.getAttribute('aria-pressed') !== 'true'));

  return {
    /** `view`: {dataset, k, playing} (dataset may be null). */
    draw({ dataset, k, playing }) {
      const nt = dataset ? dataset.nt : 1;
      slider.max = String(nt - 1);
      slider.value = String(k);
      slider.disabled = !dataset || nt < 2;
      button.disabled = slider.disabled;
      button.setAttribute('aria-pressed', String(playing));
      button.textContent = playing ? 'Pause' : 'Play';
      if (dataset) {
        const text = `t = ${dataset.timeLabel(k)} · snapshot ${dataset.snapshotLabel(k)}`;
        label.value = text;
        slider.setAttribute('aria-valuetext', text);
      } else {
        label.value = '—';
        slider.removeAttribute('aria-valuetext');
      }
    },
  };
}
