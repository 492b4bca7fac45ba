/**
 * Figure and table exports with provenance inside: SVG gets a <metadata> element, PNG an iTXt
 * chunk (PNG specification, 2nd ed., ISO/IEC 15948 §11.3.4.5), so a figure carries the settings
 * and input hashes that made it wherever it is copied.
 */
import type { Provenance, Table } from '../../../electron/api.ts';
import { tableText } from './tables.ts';

export const PROVENANCE_KEY = 'loopwise:provenance';

function escapeXml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** The SVG with a <metadata> element holding the provenance JSON, right after the opening <svg …> tag. */
export function svgWithProvenance(svg: string, provenance: Provenance): string {
  const open = /<svg\b[^>]*>/.exec(svg);
  if (!open) throw new Error('not an SVG document');
  const at = open.index + open[0].length;
  const meta = `<metadata id="${PROVENANCE_KEY}">${escapeXml(JSON.stringify(provenance))}</metadata>`;
  return svg.slice(0, at) + meta + svg.slice(at);
}

let crcTable: Uint32Array | null = null;

/** CRC-32 as PNG uses it (polynomial 0xEDB88320, reflected; PNG spec annex D). */
export function crc32(bytes: Uint8Array): number {
  if (!crcTable) {
    crcTable = new Uint32Array(256);
    for (let n = 0; n < 256; n++) {
      let c = n;
      for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
      crcTable[n] = c >>> 0;
    }
  }
  let c = 0xffffffff;
  for (const b of bytes) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

const PNG_SIGNATURE = [137, 80, 78, 71, 13, 10, 26, 10];

/** The PNG with an uncompressed iTXt chunk (UTF-8 text) inserted right after IHDR. */
export function pngWithText(png: Uint8Array, keyword: string, text: string): Uint8Array {
  if (png.length < 33 || PNG_SIGNATURE.some((b, i) => png[i] !== b)) throw new Error('not a PNG image');
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength);
  const ihdrLength = view.getUint32(8);
  const afterIhdr = 8 + 12 + ihdrLength;
  const enc = new TextEncoder();
  // keyword, NUL, compression flag 0, method 0, empty language tag + NUL, empty translated keyword + NUL, text
  const body = [...enc.encode(keyword), 0, 0, 0, 0, 0, ...enc.encode(text)];
  const typeAndData = new Uint8Array(4 + body.length);
  typeAndData.set(enc.encode('iTXt'), 0);
  typeAndData.set(body, 4);
  const chunk = new Uint8Array(12 + body.length);
  const cv = new DataView(chunk.buffer);
  cv.setUint32(0, body.length);
  chunk.set(typeAndData, 4);
  cv.setUint32(8 + body.length, crc32(typeAndData));
  const out = new Uint8Array(png.length + chunk.length);
  out.set(png.subarray(0, afterIhdr), 0);
  out.set(chunk, afterIhdr);
  out.set(png.subarray(afterIhdr), afterIhdr + chunk.length);
  return out;
}

/** Bytes of a data: URL (base64 or percent-encoded). */
export function dataUrlBytes(url: string): Uint8Array {
  const comma = url.indexOf(',');
  if (!url.startsWith('data:') || comma < 0) throw new Error('not a data URL');
  const header = url.slice(5, comma);
  const payload = url.slice(comma + 1);
  if (header.endsWith(';base64')) {
    const bin = atob(payload);
    return Uint8Array.from(bin, (ch) => ch.charCodeAt(0));
  }
  return new TextEncoder().encode(decodeURIComponent(payload));
}

/** A file name from a figure or table name, safe on every platform. */
export function fileStem(name: string): string {
  return name.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '') || 'figure';
}

/** The table as TSV, and its provenance as a sidecar JSON of the same stem. */
export function tableFiles(
  table: Table,
  name: string,
  provenance: Provenance,
): Array<{ name: string; text: string }> {
  const stem = fileStem(name);
  return [
    { name: `${stem}.tsv`, text: tableText(table, 'tsv') },
    { name: `${stem}.provenance.json`, text: JSON.stringify(provenance, null, 2) + '\n' },
  ];
}

/** Hands bytes to the browser (or Electron's save dialog) as a download. */
export function download(name: string, data: Uint8Array | string, type: string): void {
  const blob = new Blob([typeof data === 'string' ? data : (data.slice().buffer as ArrayBuffer)], { type });
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
}
