/**
 * How much each node takes part in the H1 cycles of a subject, from the cycle representatives
 * (types.ts CycleRepresentative; the persistence engine's representatives are aligned with
 * diagrams[1]). A node "is in" a cycle when it is an endpoint of one of its edges.
 *
 * With lᶜ = death − birth the lifetime of cycle c (an essential cycle of a capped filtration runs
 * to the subject's threshold) and C the selected cycles:
 *   h1_cycle_count(v)   = #{c ∈ C : v ∈ c}
 *   h1_weighted(v)      = Σ_{c ∈ C, v ∈ c} lᶜ
 *   h1_weighted_norm(v) = h1_weighted(v) / Σ_{c ∈ C} lᶜ      (0 when C is empty)
 * C is every cycle, or those with lᶜ ≥ floor, or those born inside a band of filtration values.
 * Persistence-weighted node participation in homological cycles is the "homological scaffold"
 * idea of G. Petri, P. Expert, F. Turkheimer, R. Carhart-Harris, D. Nutt, P. Hellyer, F. Vaccarino
 * (2014), Homological scaffolds of brain functional networks, J R Soc Interface 11 — there the
 * weights sit on edges; here they are summed per node.
 */
import type { CycleRepresentative } from '../types.ts';

export interface CycleSelection {
  /** Keep cycles with lifetime ≥ floor (default 0: all). */
  floor?: number;
  /** Keep cycles with lo ≤ birth ≤ hi. */
  birthBand?: [number, number];
  /** Where essential cycles end (the subject's threshold). Required when a cycle has death = ∞. */
  threshold?: number;
}

/** Lifetime of a representative, essential ones clipped at the threshold. */
export function cycleLifetime(c: CycleRepresentative, threshold = Infinity): number {
  const end = Number.isFinite(c.death) ? c.death : threshold;
  if (!Number.isFinite(end)) {
    throw new RangeError(`cycle born at ${c.birth} never dies: give the threshold to clip its lifetime`);
  }
  return end - c.birth;
}

/** The representatives that a selection keeps, with their lifetimes. */
export function selectCycles(
  reps: CycleRepresentative[],
  sel: CycleSelection = {},
): Array<{ cycle: CycleRepresentative; lifetime: number }> {
  const out: Array<{ cycle: CycleRepresentative; lifetime: number }> = [];
  for (const c of reps) {
    const l = cycleLifetime(c, sel.threshold);
    if (l < (sel.floor ?? 0)) continue;
    if (sel.birthBand && (c.birth < sel.birthBand[0] || c.birth > sel.birthBand[1])) continue;
    out.push({ cycle: c, lifetime: l });
  }
  return out;
}

export interface H1Participation {
  count: Float64Array;
  weighted: Float64Array;
  weightedNorm: Float64Array;
}

/**
 * The three per-node measures above.
 *
 *   h1Participation(4, [{birth: 1, death: 2, nodes: [0, 1, 2, 3], edges}], {})
 *   → count [1, 1, 1, 1], weighted [1, 1, 1, 1], weightedNorm [1, 1, 1, 1]
 */
export function h1Participation(
  n: number,
  reps: CycleRepresentative[],
  sel: CycleSelection = {},
): H1Participation {
  const count = new Float64Array(n);
  const weighted = new Float64Array(n);
  const weightedNorm = new Float64Array(n);
  let total = 0;
  for (const { cycle, lifetime } of selectCycles(reps, sel)) {
    total += lifetime;
    for (const v of cycle.nodes) {
      if (v < 0 || v >= n) throw new RangeError(`cycle node ${v} outside 0…${n - 1}`);
      count[v] += 1;
      weighted[v] += lifetime;
    }
  }
  if (total > 0) for (let v = 0; v < n; v++) weightedNorm[v] = weighted[v] / total;
  return { count, weighted, weightedNorm };
}

/**
 * The node-by-cycle participation matrix (n rows, one column per selected cycle, row-major):
 * entry 1 (or the cycle's lifetime, when weighted) where the node is in the cycle, else 0.
 * Its rows are the cycle-participation embedding of the nodes.
 *
 *   participationMatrix(3, [{nodes: [0, 2], …, birth: 1, death: 3}], {}, 'lifetime')
 *   → {rows: 3, cols: 1, values: [2, 0, 2]}
 */
export function participationMatrix(
  n: number,
  reps: CycleRepresentative[],
  sel: CycleSelection = {},
  weighting: 'binary' | 'lifetime' = 'binary',
): { rows: number; cols: number; values: Float64Array } {
  const chosen = selectCycles(reps, sel);
  const cols = chosen.length;
  const values = new Float64Array(n * cols);
  chosen.forEach(({ cycle, lifetime }, j) => {
    for (const v of cycle.nodes) values[v * cols + j] = weighting === 'binary' ? 1 : lifetime;
  });
  return { rows: n, cols, values };
}
