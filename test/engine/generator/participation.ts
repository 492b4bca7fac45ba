import { computePersistence } from '../../../electron/engine/persistence.ts';
import { toDistances } from '../../../electron/engine/transform.ts';
import type { SquareMatrix } from '../../../electron/engine/types.ts';

/**
 * How much each node takes part in H1 cycles of the 1 − r filtration: the number of cycle
 * representatives through it, and the summed persistence (death − birth) of those cycles.
 */
export function h1Participation(m: SquareMatrix): { count: Float64Array; persistence: Float64Array } {
  const res = computePersistence(toDistances(m, { input: 'correlation' }), { representatives: true });
  const count = new Float64Array(m.n);
  const persistence = new Float64Array(m.n);
  for (const r of res.representatives ?? []) {
    for (const v of r.nodes) {
      count[v] += 1;
      persistence[v] += r.death - r.birth;
    }
  }
  return { count, persistence };
}

export function meanOver(values: ArrayLike<number>, nodes: number[]): number {
  let s = 0;
  for (const i of nodes) s += values[i];
  return s / nodes.length;
}
