// Before files are read into the core: how much memory they will take in this tab, and
// whether the tab can hold them. The page only measures: it reads the pieces of each file
// the core asks for (the head, the zip directory at the end, the array headers) and gives
// the core what the browser says about the device; the core does the arithmetic, the
// verdict and the words (crate/src/memory.rs, crate/src/io/probe.rs).

/** Rounds of "read these ranges, ask again" at most (an .npz needs three). */
const MAX_ROUNDS = 6;

/** A file the user chose or dropped (a File or Blob): pieces are read from disk. */
export function fileSource(file) {
  return {
    name: file.name,
    size: file.size,
    read: async (offset, length) => new Uint8Array(await file.slice(offset, offset + length).arrayBuffer()),
  };
}

/** Bytes already in memory (the demo, files read before). */
export function bytesSource(name, bytes) {
  return { name, size: bytes.length, read: async (offset, length) => bytes.subarray(offset, offset + length) };
}

/**
 * What the browser says about the device, for the core's limit: navigator.deviceMemory
 * (GiB), performance.memory.jsHeapSizeLimit (bytes, Chromium only), the number of compute
 * workers, and `?memlimit=MB` from the page's address (a limit set by hand, for tests).
 */
export function deviceHints(workers) {
  const hints = { workers };
  if (navigator.deviceMemory > 0) hints.device_memory_gib = navigator.deviceMemory;
  const heap = performance.memory?.jsHeapSizeLimit;
  if (heap > 0) hints.heap_limit = heap;
  const limit = new URLSearchParams(window.location.search).get('memlimit');
  if (limit) hints.limit_mb = Number(limit);
  return hints;
}

/**
 * The core's estimate for `sources` ([{name, size, read(offset, length)}]):
 * {text, fits, refusal, tab_bytes, …} (memory::LoadEstimate).
 */
export async function estimateMemory(core, sources, hints) {
  const files = sources.map((s) => ({ name: s.name, size: s.size }));
  const pieces = [];
  let answer = core.memoryEstimate(files, pieces, hints);
  for (let round = 0; round < MAX_ROUNDS && answer.need.length > 0; round += 1) {
    for (const n of answer.need) {
      pieces.push({ file: n.file, offset: n.offset, bytes: await sources[n.file].read(n.offset, n.length) });
    }
    answer = core.memoryEstimate(files, pieces, hints);
  }
  return answer.estimate;
}
