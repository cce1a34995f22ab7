// The registry of the analysis recipe: every panel that owns part of the recipe
// (crate/src/recipe: reading, cleaning, modes, model, perturbation, transport, sensitivity,
// view) registers a section under that top-level name, and io/sharing.js assembles, saves,
// shares and applies the whole. The core checks every recipe; nothing here interprets the
// values.
//
//   import * as recipeState from '../recipe_state.js';
//   recipeState.register('cleaning', {
//     get: () => (enabled ? { threshold, passes } : null),  // null/undefined: step absent
//     set: (value) => { ... },                              // null: absent, back to defaults;
//                                                           // may return a promise
//   });
//   recipeState.changed();  // after an edit that changes get(), so the recipe is saved
//
// set() runs once the data are loaded (a recipe opened or restored before that waits), and
// may run again with the same value when the data are read again.

const sections = new Map();
const listeners = new Set();

/** Adds (or replaces) section `name` = {get(), set(value)}. */
export function register(name, section) {
  if (typeof section?.get !== 'function' || typeof section?.set !== 'function') {
    throw new TypeError(`recipe section '${name}' needs get() and set(value)`);
  }
  sections.set(name, section);
}

/** Names of the registered sections, in registration order. */
export function names() {
  return Array.from(sections.keys());
}

/** The parts of the recipe the registered sections hold now: {name: value}, absent ones left out. */
export function collect() {
  const out = {};
  for (const [name, section] of sections) {
    const value = section.get();
    if (value !== undefined && value !== null) out[name] = value;
  }
  return out;
}

/**
 * Hands every registered section its part of `recipe` (null when the recipe has none),
 * except the names in `skip`. Resolves to [{name, error}] for sections that refused. A
 * set() may return a promise (the cleaning runs in a compute worker): the later sections
 * wait for it, so they apply to the series it leaves; sections up to the first such
 * promise are set synchronously.
 */
export async function apply(recipe, skip = []) {
  const failures = [];
  for (const [name, section] of sections) {
    if (skip.includes(name)) continue;
    try {
      const done = section.set(recipe[name] ?? null);
      if (typeof done?.then === 'function') await done;
    } catch (error) {
      failures.push({ name, error });
    }
  }
  return failures;
}

/** Tells the page that a section's value changed (the recipe is saved shortly after). */
export function changed() {
  for (const fn of listeners) fn();
}

/** Calls `fn()` after every changed(). */
export function onChange(fn) {
  listeners.add(fn);
  return () => listeners.delete(fn);
}
