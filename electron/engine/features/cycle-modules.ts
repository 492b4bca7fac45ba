/**
 * The cycle-participation embedding of the nodes, its clustering, and agreement of the clusters
 * with the modules (networks) of the node table.
 */
import type { NodeInfo } from '../../api.ts';
import type { CycleRepresentative } from '../types.ts';
import { clusterRows } from './clustering.ts';
import { participationMatrix, type CycleSelection } from './h1-participation.ts';
import { adjustedRandIndex } from './rand-index.ts';

export interface CycleModules {
  /** Cluster label per node (0 … k−1). */
  labels: number[];
  k: number;
  /** Cycles that entered the embedding. */
  cycles: number;
  /** Adjusted Rand index of the clusters against the node table's networks (nodes with a network only); null without networks. */
  ari: number | null;
}

/**
 * Rows of the lifetime-weighted node × cycle participation matrix, clustered by average linkage on
 * cosine distance into k groups (k defaults to the number of networks in the node table), compared
 * with the networks by the adjusted Rand index (Hubert & Arabie 1985).
 *
 *   cycleModules(result.n, result.representatives, nodes, {threshold: result.threshold})
 *   → {labels: [0, 0, 1, …], k: 7, cycles: 41, ari: 0.18}
 */
export function cycleModules(
  n: number,
  reps: CycleRepresentative[],
  nodes: NodeInfo[] | null,
  sel: CycleSelection = {},
  k?: number,
): CycleModules {
  const networks = nodes ? nodes.map((x) => x.network) : null;
  const named = networks ? [...new Set(networks.filter((x): x is string => x !== null && x !== ''))] : [];
  const clusters = Math.min(n, k ?? Math.max(1, named.length));
  const m = participationMatrix(n, reps, sel, 'lifetime');
  const labels = Array.from(clusterRows(m, clusters));
  let ari: number | null = null;
  if (networks && named.length > 0) {
    const keep = labels.map((_, i) => i).filter((i) => networks[i] !== null && networks[i] !== '');
    ari = adjustedRandIndex(
      keep.map((i) => labels[i]),
      keep.map((i) => networks[i] as string),
    );
  }
  return { labels, k: clusters, cycles: m.cols, ari };
}
