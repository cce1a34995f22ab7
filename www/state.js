// One state object for the page, changed only through set(); subscribers run once per
// animation frame with the set of keys changed since the last run, so a burst of changes
// (a slider drag, playback) costs one redraw per frame.

export function createStore(initial) {
  let state = Object.freeze({ ...initial });
  const subscribers = new Set();
  let changed = new Set();
  let scheduled = false;

  function flush() {
    scheduled = false;
    const keys = changed;
    changed = new Set();
    for (const fn of subscribers) fn(state, keys);
  }

  function schedule() {
    if (!scheduled) {
      scheduled = true;
      requestAnimationFrame(flush);
    }
  }

  return {
    get: () => state,
    /** Merges `patch` into the state and schedules subscribers. */
    set(patch) {
      state = Object.freeze({ ...state, ...patch });
      for (const key of Object.keys(patch)) changed.add(key);
      schedule();
    },
    /** Marks keys as changed without new values (e.g. 'size' after a resize). */
    touch(...keys) {
      for (const key of keys) changed.add(key);
      schedule();
    },
    subscribe(fn) {
      subscribers.add(fn);
      return () => subscribers.delete(fn);
    },
  };
}
