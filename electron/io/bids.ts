/**
 * BIDS naming, as far as a cohort of connectivity matrices needs it: the `sub-` and `ses-`
 * entities of a path, the scan key of a participant's session, and which files are tables
 * rather than matrices. Entity labels are compared after Unicode NFC normalisation, so a name
 * typed on one system (composed ü) finds a file written on another (u + combining diaeresis).
 *
 * BIDS file names are key-value entities joined by '_' (sub-01_ses-pre_task-rest_…), and a
 * session also names a folder (sub-01/ses-pre/func/…) — BIDS specification, "Entities"
 * (common practice in neuroimaging).
 */
import { basename } from 'node:path';

/** A letter, combining mark or digit in any script: the characters of an entity label. */
const LABEL = '[\\p{L}\\p{M}\\p{N}]';
const NOT_LABEL = '[^\\p{L}\\p{M}\\p{N}]';

export function nfc(s: string): string {
  return s.normalize('NFC');
}

/** The entity `key-<label>` as a whole token: `^` or a non-label character before, none after. */
function entityRe(key: string, global: boolean): RegExp {
  return new RegExp(`(?:^|${NOT_LABEL})(${key}-${LABEL}+)(?!${LABEL})`, global ? 'gu' : 'u');
}

/** Every `sub-<label>` token of a relative path (NFC), in order, without repeats. */
export function participantTokens(rel: string): string[] {
  const out: string[] = [];
  for (const m of nfc(rel).matchAll(entityRe('sub', true))) if (!out.includes(m[1])) out.push(m[1]);
  return out;
}

/** The `sub-<label>` of a path: from the file name, else from a folder; null when none. */
export function participantOf(rel: string): string | null {
  const r = nfc(rel);
  const m = entityRe('sub', false).exec(basename(r)) ?? entityRe('sub', false).exec(r);
  return m ? m[1] : null;
}

/**
 * The session label (after `ses-`) of a path: an entity of the file name (at its start or after
 * '_'), else a folder named exactly `ses-<label>`; null when none. Stricter than participant
 * tokens, so that a folder like `pre-ses-data` or `my_ses-notes` names no session.
 */
export function sessionOf(rel: string): string | null {
  const parts = nfc(rel).split(/[\\/]/);
  const name = parts.pop() ?? '';
  const inName = new RegExp(`(?:^|_)ses-(${LABEL}+)(?=_|\\.|$)`, 'u').exec(name);
  if (inName) return inName[1];
  const folder = new RegExp(`^ses-(${LABEL}+)$`, 'u');
  for (let k = parts.length - 1; k >= 0; k--) {
    const m = folder.exec(parts[k]);
    if (m) return m[1];
  }
  return null;
}

/** A whole-token match of an id (not preceded or followed by a label character), for ids without `sub-`. */
export function tokenRe(id: string): RegExp {
  const escaped = nfc(id).replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
  return new RegExp(`(?:^|${NOT_LABEL})${escaped}(?!${LABEL})`, 'u');
}

export { scanId } from '../contract.ts';

/** A sessions-table cell (`ses-pre` or `pre`) as a session label. */
export function sessionLabel(cell: string): string {
  const t = nfc(cell.trim());
  return t.startsWith('ses-') ? t.slice(4) : t;
}

/** Labels in the order people read them: numbers inside names by value (ses-2 before ses-10). */
export const naturalOrder = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/** The stem of a file name: without its extension (and a .gz after it). */
function stem(name: string): string {
  return name.replace(/\.gz$/i, '').replace(/\.[^.]*$/, '');
}

const TABLE_STEMS = /^(participants|nodes|sessions|scans|readme|changes|license|dataset_description)$/i;
const TABLE_SUFFIXES = /_(participants|sessions|scans|nodes|events|channels|electrodes)$/i;

/**
 * True for a file whose name marks it as a table or a sidecar, never a subject's matrix:
 * participants.tsv, nodes.tsv, sub-01_sessions.tsv, sub-01_ses-pre_scans.tsv, atlas_nodes.csv,
 * any .json sidecar, README, CHANGES, LICENSE, dataset_description.
 */
export function isTableFile(name: string): boolean {
  const base = basename(name);
  if (/\.json$/i.test(base)) return true;
  const s = stem(base);
  return TABLE_STEMS.test(s) || TABLE_SUFFIXES.test(s);
}

/** `sub-01_sessions.tsv` (or .csv) → `sub-01`; null for any other name. */
export function sessionsTableOf(name: string): string | null {
  const m = /^(.+)_sessions\.(tsv|csv)$/iu.exec(nfc(basename(name)));
  return m ? m[1] : null;
}
