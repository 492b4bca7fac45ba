/**
 * The character encoding of a text input (delimited matrices, participants and node tables).
 * Read: UTF-8 with or without a byte-order mark, UTF-16 with a byte-order mark, and, when the bytes
 * are not valid UTF-8, Windows-1252 (what Excel and Windows editors write in Western Europe) with a
 * note that says so. Refused with the offending bytes and where they are: a file that mixes valid
 * UTF-8 with bytes that are not (reading either way would garble part of it), bytes that are
 * neither UTF-8 nor Windows-1252, and UTF-16 without a byte-order mark. No reader ever yields the
 * replacement character U+FFFD for a byte it could not decode.
 *
 * UTF-8 validity follows the well-formed byte sequences of RFC 3629, section 4; the Windows-1252
 * table is the WHATWG Encoding Standard's (via TextDecoder), whose five unassigned bytes
 * 0x81, 0x8D, 0x8F, 0x90 and 0x9D we refuse.
 */
import { InputFileError } from './errors.ts';

export type TextEncoding = 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252';

const CP1252_UNASSIGNED = new Set([0x81, 0x8d, 0x8f, 0x90, 0x9d]);

/** What a scan of the bytes found: where UTF-8 first fails, whether any multi-byte UTF-8 occurs. */
export class Utf8Scanner {
  /** Bytes seen so far. */
  offset = 0;
  private line = 1;
  /** First byte that is not part of a well-formed UTF-8 sequence. */
  invalid: { offset: number; line: number; bytes: number[]; context: number[] } | null = null;
  /** First well-formed multi-byte UTF-8 sequence. */
  multibyte: { offset: number; line: number; bytes: number[] } | null = null;
  /** First byte that Windows-1252 leaves unassigned. */
  unassigned: { offset: number; line: number; byte: number } | null = null;
  private need = 0;
  private lo = 0x80;
  private hi = 0xbf;
  private seq: number[] = [];
  private seqStart = 0;
  private seqLine = 1;
  private cr = false;

  feed(buf: Uint8Array): void {
    const base = this.offset;
    for (let i = 0; i < buf.length; i++) {
      const b = buf[i];
      if (this.need === 0) {
        if (b < 0x80) {
          // Lines end at \n, \r\n or a lone \r, as the line splitter counts them.
          if (b === 0x0d || (b === 0x0a && !this.cr)) this.line++;
          this.cr = b === 0x0d;
          continue;
        }
        this.cr = false;
        if (this.unassigned === null && CP1252_UNASSIGNED.has(b))
          this.unassigned = { offset: base + i, line: this.line, byte: b };
        this.seq = [b];
        this.seqStart = base + i;
        this.seqLine = this.line;
        this.lo = 0x80;
        this.hi = 0xbf;
        if (b >= 0xc2 && b <= 0xdf) this.need = 1;
        else if (b >= 0xe0 && b <= 0xef) {
          this.need = 2;
          if (b === 0xe0) this.lo = 0xa0;
          if (b === 0xed) this.hi = 0x9f;
        } else if (b >= 0xf0 && b <= 0xf4) {
          this.need = 3;
          if (b === 0xf0) this.lo = 0x90;
          if (b === 0xf4) this.hi = 0x8f;
        } else this.fail(buf, i, base);
        continue;
      }
      if (this.unassigned === null && CP1252_UNASSIGNED.has(b))
        this.unassigned = { offset: base + i, line: this.line, byte: b };
      if (b < this.lo || b > this.hi) {
        // The sequence broke off: its lead byte is the first bad one; this byte starts afresh.
        this.need = 0;
        this.failSeq(buf, base);
        i--;
        continue;
      }
      this.seq.push(b);
      this.lo = 0x80;
      this.hi = 0xbf;
      if (--this.need === 0 && this.multibyte === null)
        this.multibyte = { offset: this.seqStart, line: this.seqLine, bytes: this.seq };
    }
    this.offset += buf.length;
  }

  /** At the end of the input: a sequence cut short is invalid too. */
  end(): void {
    if (this.need > 0) {
      this.need = 0;
      this.failSeq(new Uint8Array(0), this.offset);
    }
  }

  private fail(buf: Uint8Array, i: number, base: number): void {
    this.record(buf, base, base + i, this.line, [buf[i]]);
  }

  private failSeq(buf: Uint8Array, base: number): void {
    this.record(buf, base, this.seqStart, this.seqLine, this.seq.slice());
  }

  private record(buf: Uint8Array, base: number, at: number, line: number, bytes: number[]): void {
    if (this.invalid) return;
    const k = at - base;
    if (k >= 0 && k < buf.length) {
      this.invalid = {
        offset: at,
        line,
        bytes,
        context: Array.from(buf.subarray(Math.max(0, k - 16), Math.min(buf.length, k + 16))),
      };
      this.invalidContextAt = Math.min(k, 16);
    } else {
      this.invalid = { offset: at, line, bytes, context: bytes };
      this.invalidContextAt = 0;
    }
  }

  /** Index of the first invalid byte within `invalid.context`. */
  invalidContextAt = 0;
}

const hex = (bytes: number[]): string =>
  bytes.map((b) => '0x' + b.toString(16).toUpperCase().padStart(2, '0')).join(' ');

/** Up to `max` characters of text for a message: printable, no quotes or line breaks. */
export function excerpt(s: string, max = 24): string {
  // Control and format characters (line breaks, bidi overrides), quotes and U+FFFD become '?'.
  const t = s.replace(/[\p{Cc}\p{Cf}\p{Zl}\p{Zp}'"`\\\uFFFD]/gu, '?');
  const chars = [...t];
  return chars.length > max ? chars.slice(0, max - 3).join('') + '...' : t;
}

/** The line around the first invalid byte, read as Windows-1252, for a message. */
function around(scan: Utf8Scanner): string {
  const ctx = scan.invalid!.context;
  const at = scan.invalidContextAt;
  let a = at;
  while (a > 0 && ctx[a - 1] !== 0x0a && ctx[a - 1] !== 0x0d) a--;
  let b = at;
  while (b < ctx.length && ctx[b] !== 0x0a && ctx[b] !== 0x0d) b++;
  const line = new TextDecoder('windows-1252').decode(Uint8Array.from(ctx.slice(a, b)));
  return excerpt(line.replace(/\t/g, ' '), 40);
}

const SAVE_AS_UTF8 = 'save it as UTF-8 (in Excel: Save As → "CSV UTF-8"; in an editor: encoding UTF-8)';

/**
 * Once the whole input has been scanned: the encoding to read it with and a note when that is not
 * UTF-8, or an error when no reading is right.
 */
export function settleEncoding(
  file: string,
  scan: Utf8Scanner,
): { encoding: TextEncoding; note: string | null } {
  const bad = scan.invalid;
  if (!bad) return { encoding: 'utf-8', note: null };
  const where = `line ${bad.line}, byte offset ${bad.offset}`;
  if (scan.multibyte) {
    throw new InputFileError(
      file,
      `mixes text encodings: ${hex(bad.bytes)} at ${where} is not UTF-8, but line ${scan.multibyte.line} holds UTF-8 (${hex(scan.multibyte.bytes)}); ${SAVE_AS_UTF8}`,
      'bad-encoding',
    );
  }
  if (scan.unassigned) {
    throw new InputFileError(
      file,
      `is neither UTF-8 nor Windows-1252: byte ${hex([scan.unassigned.byte])} at line ${scan.unassigned.line}, byte offset ${scan.unassigned.offset}; ${SAVE_AS_UTF8}`,
      'bad-encoding',
    );
  }
  return {
    encoding: 'windows-1252',
    note: `is not UTF-8 (${hex(bad.bytes)} at ${where}: '${around(scan)}'); read as Windows-1252. If that line looks wrong, ${SAVE_AS_UTF8}`,
  };
}

/**
 * The encoding announced by the first bytes: a UTF-8 or UTF-16 byte-order mark. Refuses what is
 * not text: gzip data, NUL bytes (binary, or UTF-16 without a byte-order mark).
 */
export function sniffEncoding(file: string, head: Uint8Array): TextEncoding | 'scan' {
  if (head[0] === 0x1f && head[1] === 0x8b)
    throw new InputFileError(file, 'is gzip-compressed; decompress it (gunzip) first', 'bad-format');
  if (head[0] === 0xff && head[1] === 0xfe) return 'utf-16le';
  if (head[0] === 0xfe && head[1] === 0xff) return 'utf-16be';
  const probe = head.subarray(0, 4096);
  const nul = probe.indexOf(0);
  if (nul >= 0) {
    // ASCII text in UTF-16: every other byte is 0.
    let even = 0;
    let odd = 0;
    for (let i = 0; i < probe.length; i++) {
      if (probe[i] !== 0) continue;
      if (i % 2 === 0) even++;
      else odd++;
    }
    const half = probe.length / 2;
    if (even > 0.4 * half && odd === 0)
      throw new InputFileError(
        file,
        `looks like UTF-16 (big-endian) text without a byte-order mark; ${SAVE_AS_UTF8}`,
        'bad-encoding',
      );
    if (odd > 0.4 * half && even === 0)
      throw new InputFileError(
        file,
        `looks like UTF-16 (little-endian) text without a byte-order mark; ${SAVE_AS_UTF8}`,
        'bad-encoding',
      );
    throw new InputFileError(
      file,
      `is binary, not delimited text (a NUL byte at byte offset ${nul})`,
      'bad-format',
    );
  }
  return 'scan';
}

/**
 * The note for a file that already holds U+FFFD, the replacement character a converter writes for
 * bytes it could not read: the original characters are lost, and values that differed only there
 * ("Gruppe Ä", "Gruppe Ö") now look the same.
 */
export function replacementNote(at: { line: number; text: string }): string {
  const k = at.text.indexOf('\uFFFD');
  const shown = at.text
    .slice(Math.max(0, k - 20), k + 20)
    .replace(/\uFFFD/g, '\u25A1')
    .replace(/\t/g, ' ');
  return `line ${at.line} holds the replacement character U+FFFD (shown as \u25A1: '${excerpt(shown, 40)}'): the text was garbled by an earlier conversion and its original characters are lost; values that differed only there now look alike. Fix the source file`;
}

/** Decodes a whole file's bytes (small tables). */
export function decodeText(
  file: string,
  buf: Uint8Array,
): { text: string; encoding: TextEncoding; note: string | null } {
  const sniffed = sniffEncoding(file, buf);
  if (sniffed !== 'scan') {
    let text: string;
    try {
      text = new TextDecoder(sniffed, { fatal: true }).decode(buf);
    } catch {
      throw new InputFileError(
        file,
        `starts with a ${sniffed === 'utf-16le' ? 'UTF-16 little-endian' : 'UTF-16 big-endian'} byte-order mark but is not valid UTF-16; ${SAVE_AS_UTF8}`,
        'bad-encoding',
      );
    }
    return { text, encoding: sniffed, note: null };
  }
  const scan = new Utf8Scanner();
  scan.feed(buf);
  scan.end();
  const { encoding, note } = settleEncoding(file, scan);
  // TextDecoder drops a leading UTF-8 byte-order mark.
  return { text: new TextDecoder(encoding).decode(buf), encoding, note };
}
