// Field views computed on demand (sensitivity maps, a picked mode's shape) that join the
// field menu beside the series' fields and the FTLE maps. A panel registers its views under
// an owner name; main.js asks the registry for the view, colour range and probe of the
// selected entry. Holds no numerics: pictures, ranges and labels come from the core.
//
// An entry: {id, label, range: [lo, hi], legend: text under the map,
//   view(state) → {picture, title, caption, quantityLabel, colormap, unit, ridges?},
//   probe([x, y]) → {label, unit, value | null}}

export function createResultViews() {
  const owners = new Map(); // owner → {label, entries: Map(id → entry), group: <optgroup>}
  let select = null;
  let version = 0;

  function find(id) {
    for (const o of owners.values()) {
      const e = o.entries.get(id);
      if (e) return e;
    }
    return null;
  }

  function render(owner) {
    const o = owners.get(owner);
    if (!select || !o) return;
    o.group ??= document.createElement('optgroup');
    o.group.label = o.label;
    o.group.replaceChildren(...Array.from(o.entries.values(), (e) => new Option(e.label, e.id)));
    if (o.entries.size === 0) o.group.remove();
    else if (!o.group.parentNode) select.append(o.group);
  }

  return {
    /** The <select> of fields the entries join (one optgroup per owner). */
    attach(element) {
      select = element;
      for (const owner of owners.keys()) render(owner);
    },
    /** Replaces the entries of `owner` (a group titled `label`). */
    set(owner, label, entries) {
      const o = owners.get(owner) ?? { entries: new Map(), group: null };
      o.label = label;
      o.entries = new Map(entries.map((e) => [e.id, e]));
      owners.set(owner, o);
      version += 1;
      render(owner);
    },
    /** Removes the entries of `owner`. */
    clear(owner) {
      if (!owners.has(owner)) return;
      owners.get(owner).entries = new Map();
      version += 1;
      render(owner);
    },
    has(id) { return find(id) !== null; },
    get(id) { return find(id); },
    /** Whether any entry of any owner carries ridges to overlay. */
    hasRidges() {
      for (const o of owners.values()) for (const e of o.entries.values()) if (e.ridges) return true;
      return false;
    },
    /** The ridges registered by any owner (the latest sensitivity run), or null. */
    ridges() {
      for (const o of owners.values()) for (const e of o.entries.values()) if (e.ridges) return e.ridges;
      return null;
    },
    /** Changes with every set/clear, so the page knows to redraw. */
    get version() { return version; },
  };
}
