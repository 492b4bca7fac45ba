/** SHA-256 digests of inputs, for cache keys and provenance. */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import type { SquareMatrix } from '../engine/types.ts';

/**
 * The hash of a matrix as read: its n × n float64 values, row-major, in the machine's byte order
 * (little-endian on every platform we ship), so the same numbers in a .csv or a .mat file share it.
 */
export function sha256Matrix(m: SquareMatrix): string {
  return createHash('sha256')
    .update(`${m.n}:`)
    .update(new Uint8Array(m.values.buffer, m.values.byteOffset, m.values.byteLength))
    .digest('hex');
}

/** The hash of a file's bytes, streamed so a large stack file is never held whole. */
export function sha256File(file: string): Promise<string> {
  return new Promise((resolve, reject) => {
    const h = createHash('sha256');
    createReadStream(file)
      .on('data', (chunk) => h.update(chunk))
      .on('error', reject)
      .on('end', () => resolve(h.digest('hex')));
  });
}
