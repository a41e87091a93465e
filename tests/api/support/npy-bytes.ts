import { createHash } from 'node:crypto';

/**
 * .npy bytes written by hand from the format's specification (NumPy "numpy.lib.format", version 1.0):
 * magic "\x93NUMPY", version 1.0, a little-endian uint16 header length, then a Python dict literal
 * padded with spaces and ended by "\n" so that magic + length + header is a multiple of 64 bytes.
 * Independent of renderer/src/npy, so the upload tests do not check our reader against itself.
 */
export function npyBytes(descr: string, shape: number[], body: Buffer): Buffer {
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let dict = `{'descr': '${descr}', 'fortran_order': False, 'shape': ${shapeText}, }`;
  const total = 10 + dict.length + 1;
  dict += ' '.repeat((64 - (total % 64)) % 64) + '\n';
  const pre = Buffer.alloc(10);
  Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]).copy(pre);
  pre.writeUInt16LE(dict.length, 8);
  return Buffer.concat([pre, Buffer.from(dict, 'latin1'), body]);
}

/** Integer values as a little- or big-endian body of `bytes` bytes each. */
export function intBody(values: number[], bytes: 1 | 2 | 4 | 8, endian: 'le' | 'be' = 'le', signed = true): Buffer {
  const b = Buffer.alloc(values.length * bytes);
  values.forEach((v, k) => {
    if (bytes === 8) {
      const big = BigInt(v);
      if (endian === 'le') b.writeBigInt64LE(big, k * 8);
      else b.writeBigInt64BE(big, k * 8);
    } else if (signed) {
      if (endian === 'le') b.writeIntLE(v, k * bytes, bytes);
      else b.writeIntBE(v, k * bytes, bytes);
    } else if (endian === 'le') b.writeUIntLE(v, k * bytes, bytes);
    else b.writeUIntBE(v, k * bytes, bytes);
  });
  return b;
}

/** The content hash uploads are addressed by: sha256 of the heights as int32 little-endian, C order. */
export function heightsHash(values: number[]): string {
  return createHash('sha256').update(intBody(values, 4, 'le')).digest('hex');
}
