// Shapes of the arrays inside an .npz archive, read with Node's own zlib: an independent
// reading of the demo file, so the test never takes nx, ny, nt from the page it checks.
// Formats: the ZIP central directory (PKWARE APPNOTE, incl. zip64 sizes) and the .npy
// header (NumPy format spec: magic, version, little-endian header length, Python dict).
import { readFileSync } from 'node:fs';
import { inflateRawSync } from 'node:zlib';

const EOCD = 0x06054b50;
const CENTRAL = 0x02014b50;
const LOCAL = 0x04034b50;

function entries(buf) {
  let eocd = -1;
  for (let i = buf.length - 22; i >= Math.max(0, buf.length - 22 - 65535); i -= 1) {
    if (buf.readUInt32LE(i) === EOCD) { eocd = i; break; }
  }
  if (eocd < 0) throw new Error('not a zip archive: no end-of-central-directory record');
  const count = buf.readUInt16LE(eocd + 10);
  let p = buf.readUInt32LE(eocd + 16);
  const out = new Map();
  for (let n = 0; n < count; n += 1) {
    if (buf.readUInt32LE(p) !== CENTRAL) throw new Error(`bad central directory entry ${n}`);
    const method = buf.readUInt16LE(p + 10);
    let compressed = buf.readUInt32LE(p + 20);
    let uncompressed = buf.readUInt32LE(p + 24);
    const nameLen = buf.readUInt16LE(p + 28);
    const extraLen = buf.readUInt16LE(p + 30);
    const commentLen = buf.readUInt16LE(p + 32);
    let offset = buf.readUInt32LE(p + 42);
    const name = buf.toString('utf8', p + 46, p + 46 + nameLen);
    // zip64 extended information: the 8-byte values present are those whose 32-bit field
    // is 0xFFFFFFFF, in the order uncompressed, compressed, offset.
    let e = p + 46 + nameLen;
    const end = e + extraLen;
    while (e + 4 <= end) {
      const id = buf.readUInt16LE(e);
      const size = buf.readUInt16LE(e + 2);
      if (id === 0x0001) {
        let q = e + 4;
        if (uncompressed === 0xffffffff) { uncompressed = Number(buf.readBigUInt64LE(q)); q += 8; }
        if (compressed === 0xffffffff) { compressed = Number(buf.readBigUInt64LE(q)); q += 8; }
        if (offset === 0xffffffff) { offset = Number(buf.readBigUInt64LE(q)); }
      }
      e += 4 + size;
    }
    out.set(name, { method, compressed, offset });
    p = end + commentLen;
  }
  return out;
}

function member(buf, entry) {
  const { method, compressed, offset } = entry;
  if (buf.readUInt32LE(offset) !== LOCAL) throw new Error('bad local file header');
  const start = offset + 30 + buf.readUInt16LE(offset + 26) + buf.readUInt16LE(offset + 28);
  const data = buf.subarray(start, start + compressed);
  if (method === 0) return data;
  if (method === 8) return inflateRawSync(data);
  throw new Error(`unsupported zip compression method ${method}`);
}

/** Shape of a .npy array from its header, e.g. [240, 40, 100]. */
export function npyShape(bytes) {
  if (bytes.toString('latin1', 0, 6) !== '\x93NUMPY') throw new Error('not a .npy array');
  const major = bytes[6];
  const headerLen = major === 1 ? bytes.readUInt16LE(8) : bytes.readUInt32LE(8);
  const headerStart = major === 1 ? 10 : 12;
  const header = bytes.toString('latin1', headerStart, headerStart + headerLen);
  const m = header.match(/'shape':\s*\(([^)]*)\)/);
  if (!m) throw new Error(`no shape in .npy header: ${header}`);
  return m[1].split(',').map((s) => s.trim()).filter(Boolean).map(Number);
}

/** {name: shape} for the members of the .npz file at `path` named in `names` (no '.npy'). */
export function npzShapes(path, names) {
  const buf = readFileSync(path);
  const all = entries(buf);
  const shapes = {};
  for (const name of names) {
    const entry = all.get(`${name}.npy`);
    if (!entry) throw new Error(`${path} has no ${name}.npy`);
    shapes[name] = npyShape(member(buf, entry));
  }
  return shapes;
}

const DTYPES = {
  '<f4': Float32Array, '<f8': Float64Array, '|u1': Uint8Array, '<u1': Uint8Array, '|b1': Uint8Array,
  '<i4': Int32Array, '<i8': BigInt64Array,
};

/** A .npy array as {shape, data: TypedArray} (little-endian, C order, common dtypes only). */
export function npyArray(bytes) {
  const major = bytes[6];
  const headerLen = major === 1 ? bytes.readUInt16LE(8) : bytes.readUInt32LE(8);
  const headerStart = major === 1 ? 10 : 12;
  const header = bytes.toString('latin1', headerStart, headerStart + headerLen);
  const descr = header.match(/'descr':\s*'([^']+)'/)?.[1];
  if (/'fortran_order':\s*True/.test(header)) throw new Error('Fortran-ordered arrays are not supported');
  const Type = DTYPES[descr];
  if (!Type) throw new Error(`unsupported dtype ${descr}`);
  const start = headerStart + headerLen;
  const body = bytes.subarray(start);
  const copy = new Uint8Array(body.length);
  copy.set(body);
  return { shape: npyShape(bytes), data: new Type(copy.buffer, 0, body.length / Type.BYTES_PER_ELEMENT) };
}

/** {name: {shape, data}} for the members of the .npz file at `path` named in `names`. */
export function npzArrays(path, names) {
  const buf = readFileSync(path);
  const all = entries(buf);
  const out = {};
  for (const name of names) {
    const entry = all.get(`${name}.npy`);
    if (!entry) throw new Error(`${path} has no ${name}.npy`);
    out[name] = npyArray(member(buf, entry));
  }
  return out;
}

/** Names of the arrays in the .npz file at `path` (without '.npy'), in archive order. */
export function npzNames(path) {
  return Array.from(entries(readFileSync(path)).keys(), (n) => n.replace(/\.npy$/, ''));
}
