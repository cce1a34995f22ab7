// The dataset summary: rows written by the core ([{key, label, value}]) as a description list.

export function createSummary(dl) {
  return {
    /** Shows `rows`, or a placeholder when there is no dataset. */
    draw(rows) {
      dl.replaceChildren();
      if (!rows) {
        const p = document.createElement('dd');
        p.className = 'empty';
        p.textContent = 'No data loaded.';
        dl.append(p);
        return;
      }
      for (const row of rows) {
        const dt = document.createElement('dt');
        dt.textContent = row.label;
        const dd = document.createElement('dd');
        dd.textContent = row.value;
        dd.dataset.key = row.key;
        dl.append(dt, dd);
      }
    },
  };
}
