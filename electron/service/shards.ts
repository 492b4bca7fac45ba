/**
 * Shards of a cohort run: which subjects share K of M computes, what a shard leaves for the merge
 * (OUT/.loopwise-shards/shard-K-of-M.json), and reading the shards back as one cohort's records,
 * refusing a missing shard or shards run with other settings.
 */
import { mkdir, readFile, readdir } from 'node:fs/promises';
import { join } from 'node:path';
import type { AnalysisSettings, CohortReport, StatsSettings } from '../api.ts';
import { removeStaleTemps, writeFileAtomic } from './atomic.ts';
import type { SubjectRecord } from './tables.ts';

export const SHARD_DIR = '.loopwise-shards';

/** What a shard leaves for the merge. */
export interface ShardManifest {
  format: 1;
  shard: { index: number; count: number };
  filtrationHash: string;
  settings: AnalysisSettings;
  stats: StatsSettings;
  report: CohortReport;
  cacheDir: string;
  records: SubjectRecord[];
  computed: number;
  reused: number;
}

/** The subjects of share `index` of `count` (1-based): positions ≡ index − 1 (mod count). */
export function shareOf(total: number, shard: { index: number; count: number } | null | undefined): number[] {
  const all = Array.from({ length: total }, (_, i) => i);
  if (!shard) return all;
  return all.filter((i) => i % shard.count === shard.index - 1);
}

/** Checks a shard request: K/M with 1 ≤ K ≤ M. */
export function checkShard(shard: { index: number; count: number }): void {
  const { index, count } = shard;
  if (!(Number.isInteger(count) && count >= 1 && Number.isInteger(index) && index >= 1 && index <= count))
    throw new Error(`shard must be K/M with 1 ≤ K ≤ M, got ${index}/${count}`);
}

/** The lock file a shard holds while it runs (shards of one cohort run side by side in one folder). */
export function shardLockName(shard: { index: number; count: number }): string {
  return `.loopwise-lock-shard-${shard.index}-of-${shard.count}`;
}

export async function writeShardManifest(outDir: string, manifest: ShardManifest): Promise<void> {
  const dir = join(outDir, SHARD_DIR);
  await mkdir(dir, { recursive: true });
  await removeStaleTemps(dir);
  await writeFileAtomic(
    join(dir, `shard-${manifest.shard.index}-of-${manifest.shard.count}.json`),
    JSON.stringify(manifest),
  );
}

/** The shards recorded in outDir, checked to be one whole cohort run with one set of settings. */
export async function readShards(
  dir: string,
): Promise<{ manifests: ShardManifest[]; records: SubjectRecord[] }> {
  const shardDir = join(dir, SHARD_DIR);
  const names = (await readdir(shardDir).catch(() => [] as string[])).filter((n) =>
    /^shard-\d+-of-\d+\.json$/.test(n),
  );
  if (names.length === 0)
    throw new Error(`${dir}: no shard results found (expected ${SHARD_DIR}/shard-K-of-M.json)`);
  const manifests: ShardManifest[] = [];
  for (const n of names)
    manifests.push(JSON.parse(await readFile(join(shardDir, n), 'utf8')) as ShardManifest);
  const counts = [...new Set(manifests.map((m) => m.shard.count))];
  if (counts.length > 1)
    throw new Error(
      `${shardDir} holds shards of different splits (${counts.map((c) => `/${c}`).join(', ')}); remove the stale ones`,
    );
  const count = counts[0];
  const missing = Array.from({ length: count }, (_, i) => i + 1).filter(
    (k) => !manifests.some((m) => m.shard.index === k),
  );
  if (missing.length > 0)
    throw new Error(
      `shard ${missing.map((k) => `${k}/${count}`).join(', ')} not finished: run analyze --shard for it first`,
    );
  manifests.sort((a, b) => a.shard.index - b.shard.index);
  const first = manifests[0];
  for (const m of manifests) {
    if (
      m.filtrationHash !== first.filtrationHash ||
      JSON.stringify(m.settings) !== JSON.stringify(first.settings)
    )
      throw new Error(`shard ${m.shard.index}/${count} was run with other settings than shard 1/${count}`);
    if (m.report.subjects.length !== first.report.subjects.length)
      throw new Error(`shard ${m.shard.index}/${count} saw a different cohort than shard 1/${count}`);
  }
  const total = first.report.subjects.length;
  const byIndex = new Map<number, SubjectRecord>();
  for (const m of manifests) for (const r of m.records) byIndex.set(r.index, r);
  const records: SubjectRecord[] = [];
  for (let i = 0; i < total; i++) {
    const r = byIndex.get(i);
    if (!r) throw new Error(`subject ${first.report.subjects[i].id} is in no shard's results`);
    records.push(r);
  }
  return { manifests, records };
}
