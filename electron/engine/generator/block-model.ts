/**
 * A weighted stochastic block model for correlation matrices, realised as a latent-factor model
 * so that every matrix it yields is a valid correlation matrix (symmetric, unit diagonal,
 * positive semi-definite).
 *
 * The block model: Holland, Laskey & Leinhardt (1983), "Stochastic blockmodels: first steps",
 * Social Networks 5 — nodes fall into modules and the law of an edge depends only on the
 * modules of its ends; the weighted form (edge weights rather than edge presence) follows
 * Aicher, Jacobs & Clauset (2015), J. Complex Networks 3 (cited from memory). Here the edge
 * weight is a correlation, and its block means are set by three numbers
 *   w  correlation within a module,
 *   c  correlation between modules of the same super-module (nesting; c = b without nesting),
 *   b  correlation between modules of different super-modules,
 * with 0 ≤ b ≤ c ≤ w ≤ 1. Writing latent factors as unit-variance series — a global g, one h_s
 * per super-module, one f_m per module — and ε_i as the node's own noise, node i of module
 * m(i) and super-module s(i) is
 *
 *   x_i = √(b(1−q_i)) g + √((c−b)(1−q_i)) h_s(i) + √(w−c) Σ_m √π_im f_m + ψ_i ε_i,
 *   ψ_i² = 1 − w + q_i c,
 *
 * where π_im is the share of node i's module variance on module m (π_i,m(i) = 1 when the node
 * overlaps no other module; overlapping modules move a share onto another module's factor) and
 * q_i is the share of its between-module variance moved into its own noise (0 unless the node
 * is isolated). Every node has variance 1, so its correlations are the loading products:
 *
 *   r_ij = Σ_k L_ik L_jk  (i ≠ j):  w within a module, c within a super-module, b otherwise,
 *   and a node i bridging to module B with share π gets r_ij = r⁰_ij + (w − c)√π with j in B.
 *
 * Latent-factor models of this kind are common practice for simulating modular functional
 * connectivity; sample correlations of their series (sample.ts) are PSD by construction.
 *
 *   const spec = { modules: [0, 0, 1, 1], within: 0.6, between: 0.1 };
 *   populationCorrelation(factorModel(spec)).values → [1, .6, .1, .1,  .6, 1, .1, .1,  …]
 */
import type { SquareMatrix } from '../types.ts';

/** Node `node` moves a share of its module variance onto the factor of module `module` (an overlapping module). */
export interface Overlap {
  node: number;
  module: number;
  share: number;
}

/** Node `node` moves a share of its between-module variance (global and super-module) into its own noise. */
export interface Isolation {
  node: number;
  share: number;
}

export interface BlockModelSpec {
  /** Module of every node, 0 … K−1. */
  modules: ArrayLike<number>;
  /** Population correlation of two nodes of one module, w. */
  within: number;
  /** Population correlation of two nodes in modules of different super-modules (or of any two modules without nesting), b. */
  between: number;
  /** Nested modules: the super-module of each module, and the correlation c between modules sharing one. */
  nesting?: { superOf: ArrayLike<number>; correlation: number };
  overlaps?: Overlap[];
  isolations?: Isolation[];
}

/** x = L f + diag(ψ) ε with unit-variance factors f and noise ε: L is n × factors, row-major. */
export interface FactorModel {
  n: number;
  factors: number;
  loadings: Float64Array;
  /** ψ_i, the standard deviation of node i's own noise. */
  noise: Float64Array;
}

/**
 * A planted group effect. 'bridge': each node i = nodes[k] loads with `share` on the factor of
 * module targets[k], raising its correlation with that module by (w − c)√share. 'isolate': each
 * node moves `share` of its between-module variance into noise, so its correlation with a node of
 * another module falls by the factor √(1 − share) (and with its own module from w to
 * w − c + c√(1 − share)).
 */
export type PlantedEffect =
  | { kind: 'bridge'; nodes: number[]; targets: number[]; share: number }
  | { kind: 'isolate'; nodes: number[]; share: number };

function moduleCount(spec: BlockModelSpec): number {
  let k = 0;
  for (let i = 0; i < spec.modules.length; i++) k = Math.max(k, spec.modules[i] + 1);
  return k;
}

function checkShare(share: number, what: string): void {
  if (!(share >= 0 && share <= 1)) throw new RangeError(`${what}: share must lie in [0, 1], got ${share}`);
}

/** The factor model of a block-model spec (the equations in this file's header). */
export function factorModel(spec: BlockModelSpec): FactorModel {
  const { modules, within: w, between: b } = spec;
  const n = modules.length;
  const K = moduleCount(spec);
  for (let i = 0; i < n; i++) {
    const m = modules[i];
    if (!Number.isInteger(m) || m < 0) throw new RangeError(`node ${i}: module ${m} is not an integer ≥ 0`);
  }
  const c = spec.nesting ? spec.nesting.correlation : b;
  if (!(b >= 0 && b <= c && c <= w && w <= 1)) {
    throw new RangeError(
      `need 0 ≤ between ≤ nested correlation ≤ within ≤ 1, got between ${b}, nested ${c}, within ${w}`,
    );
  }
  let S = 0;
  if (spec.nesting) {
    const { superOf } = spec.nesting;
    if (superOf.length < K)
      throw new RangeError(`nesting names super-modules for ${superOf.length} of ${K} modules`);
    for (let m = 0; m < K; m++) {
      if (!Number.isInteger(superOf[m]) || superOf[m] < 0) {
        throw new RangeError(`module ${m}: super-module ${superOf[m]} is not an integer ≥ 0`);
      }
      S = Math.max(S, superOf[m] + 1);
    }
  }

  // π (module shares) and q (isolation) per node.
  const pi = new Float64Array(n * K);
  for (let i = 0; i < n; i++) pi[i * K + modules[i]] = 1;
  for (const o of spec.overlaps ?? []) {
    checkShare(o.share, `overlap of node ${o.node}`);
    if (!(o.node >= 0 && o.node < n))
      throw new RangeError(`overlap names node ${o.node}, outside 0 … ${n - 1}`);
    if (!(o.module >= 0 && o.module < K))
      throw new RangeError(`overlap names module ${o.module}, outside 0 … ${K - 1}`);
    if (o.module === modules[o.node])
      throw new RangeError(`node ${o.node} cannot overlap its own module ${o.module}`);
    const home = o.node * K + modules[o.node];
    if (o.share > pi[home] + 1e-12) {
      throw new RangeError(`node ${o.node}: overlap shares add up to more than 1`);
    }
    pi[home] -= o.share;
    pi[o.node * K + o.module] += o.share;
  }
  const q = new Float64Array(n);
  for (const iso of spec.isolations ?? []) {
    checkShare(iso.share, `isolation of node ${iso.node}`);
    if (!(iso.node >= 0 && iso.node < n))
      throw new RangeError(`isolation names node ${iso.node}, outside 0 … ${n - 1}`);
    q[iso.node] = 1 - (1 - q[iso.node]) * (1 - iso.share);
  }

  // Factor columns: 0 global, 1 … S super-modules, then the K modules.
  const F = 1 + S + K;
  const L = new Float64Array(n * F);
  const noise = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const row = i * F;
    const keep = 1 - q[i];
    L[row] = Math.sqrt(b * keep);
    if (spec.nesting) L[row + 1 + spec.nesting.superOf[modules[i]]] = Math.sqrt((c - b) * keep);
    for (let m = 0; m < K; m++) {
      const p = pi[i * K + m];
      if (p > 0) L[row + 1 + S + m] = Math.sqrt((w - c) * p);
    }
    noise[i] = Math.sqrt(Math.max(0, 1 - w + q[i] * c));
  }
  return { n, factors: F, loadings: L, noise };
}

/** The model's population correlation matrix L Lᵀ + diag(ψ²): unit diagonal, PSD as a Gram matrix plus a diagonal ≥ 0. */
export function populationCorrelation(model: FactorModel): SquareMatrix {
  const { n, factors: F, loadings: L } = model;
  const values = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    values[i * n + i] = 1;
    for (let j = 0; j < i; j++) {
      let s = 0;
      for (let k = 0; k < F; k++) s += L[i * F + k] * L[j * F + k];
      values[i * n + j] = s;
      values[j * n + i] = s;
    }
  }
  return { n, values };
}

/** The K × K block means of the population correlation for nodes without overlap or isolation (diagonal: w). */
export function blockMeans(spec: BlockModelSpec): SquareMatrix {
  const K = moduleCount(spec);
  const values = new Float64Array(K * K);
  for (let a = 0; a < K; a++) {
    for (let z = 0; z < K; z++) {
      values[a * K + z] =
        a === z
          ? spec.within
          : spec.nesting && spec.nesting.superOf[a] === spec.nesting.superOf[z]
            ? spec.nesting.correlation
            : spec.between;
    }
  }
  return { n: K, values };
}

/** The spec with a planted effect added (the spec itself is left unchanged). */
export function withPlantedEffect(spec: BlockModelSpec, effect: PlantedEffect): BlockModelSpec {
  checkShare(effect.share, `planted ${effect.kind}`);
  if (effect.kind === 'bridge') {
    if (effect.targets.length !== effect.nodes.length) {
      throw new RangeError(
        `a bridge names ${effect.nodes.length} nodes but ${effect.targets.length} target modules`,
      );
    }
    const added = effect.nodes.map((node, k) => ({ node, module: effect.targets[k], share: effect.share }));
    return { ...spec, overlaps: [...(spec.overlaps ?? []), ...added] };
  }
  const added = effect.nodes.map((node) => ({ node, share: effect.share }));
  return { ...spec, isolations: [...(spec.isolations ?? []), ...added] };
}
