/**
 * The results queries the views make (api.ts), each answered once per run and arguments: the
 * service's answers for a finished run do not change, so switching views or measures back and
 * forth asks the service again for nothing.
 */
import type {
  LoopwiseApi,
  RegionEffects,
  RegionValues,
  ResultTableName,
  Table,
} from '../../../electron/api.ts';

const memo = new WeakMap<object, Map<string, Promise<unknown>>>();

function once<T>(door: object, key: string, ask: () => Promise<T>): Promise<T> {
  let m = memo.get(door);
  if (!m) memo.set(door, (m = new Map()));
  let p = m.get(key) as Promise<T> | undefined;
  if (!p) {
    p = ask();
    m.set(key, p);
    // A failed question is asked again next time.
    p.catch(() => m.delete(key));
  }
  return p;
}

export function regionEffectsOf(
  door: LoopwiseApi,
  runId: string,
  measure: string,
): Promise<RegionEffects | null> {
  return once(door, `effects\u0000${runId}\u0000${measure}`, () => door.regionEffects(runId, measure));
}

export function regionValuesOf(
  door: LoopwiseApi,
  runId: string,
  measure: string,
  node: number,
): Promise<RegionValues | null> {
  return once(door, `values\u0000${runId}\u0000${measure}\u0000${node}`, () =>
    door.regionValues(runId, measure, node),
  );
}

/**
 * A whole result table, fetched page by page (the service answers at most MAX_PAGE_ROWS rows a
 * call), for a download: each page is its own task, so a million-row table never blocks the page.
 */
export async function wholeTable(
  door: LoopwiseApi,
  runId: string,
  table: ResultTableName,
  onPage?: (rows: number, total: number) => void,
): Promise<Table | null> {
  const limit = 5000;
  const first = await door.tablePage(runId, { table, offset: 0, limit });
  if (!first) return null;
  const rows = [...first.rows];
  onPage?.(rows.length, first.total);
  while (rows.length < first.total) {
    const next = await door.tablePage(runId, { table, offset: rows.length, limit });
    if (!next || next.rows.length === 0) break;
    rows.push(...next.rows);
    onPage?.(rows.length, first.total);
  }
  return { columns: first.columns, rows };
}
