/**
 * Per-node measures from the H0 merge tree (types.ts MergeEvent: every node is born at 0; at a merge
 * the component holding the smaller node index survives — the elder rule with ties broken by index).
 *
 *   h0_join_value(v): the filtration value from which v belongs to the largest component for good,
 *     i.e. inf{t : v lies in the largest component at every s ≥ t}; the largest component is the one
 *     with most nodes, ties to the one holding the smaller node index. NaN for nodes outside the
 *     final largest component (a capped filtration can end disconnected). Early joiners are the
 *     core the giant component grows from: the edge filtration read as bond percolation
 *     (D. Callaway, M. Newman, S. Strogatz, D. Watts (2000), Network robustness and fragility:
 *     percolation on random graphs, Phys Rev Lett 85) over the single-linkage dendrogram of brain
 *     networks (H. Lee, H. Kang, M. K. Chung, B.-N. Kim, D. S. Lee (2012), Persistent brain network
 *     homology from the perspective of dendrogram, IEEE Trans Med Imaging 31) — references from memory.
 *
 *   h0_birth_component_lifetime(v): the lifetime of the H0 class born at v, i.e. the value at which
 *     the component whose elder (smallest index) is v is absorbed — the H0 interval [0, death) that
 *     the elder rule assigns to v (H. Edelsbrunner, J. Harer (2010), Computational Topology, VII.1).
 *     The node that survives to the end gets the end of the filtration (`end`, the threshold).
 *     Because all births are 0, which node of a merging pair "dies" follows the file's node order.
 */
import type { MergeEvent } from '../types.ts';

/**
 * h0_join_value of every node, by replaying the merge tree (Lee et al. 2012's dendrogram) and
 * tracking the largest component (Callaway et al. 2000's giant component).
 *
 *   h0JoinValue(3, [{value: 1, edge: [2, 1], survivor: 1, absorbed: 2}, {value: 2, edge: [1, 0], survivor: 0, absorbed: 1}])
 *   → [2, 1, 1]   (nodes 1, 2 form the largest component at 1; node 0 joins it at 2)
 */
export function h0JoinValue(n: number, mergeTree: MergeEvent[]): Float64Array {
  const join = new Float64Array(n).fill(NaN);
  if (n === 0) return join;
  const parent = new Int32Array(n);
  const size = new Int32Array(n).fill(1);
  const minNode = new Int32Array(n);
  const members: number[][] = [];
  for (let i = 0; i < n; i++) {
    parent[i] = minNode[i] = i;
    members.push([i]);
  }
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]];
      x = parent[x];
    }
    return x;
  };
  const beats = (a: number, b: number): boolean =>
    size[a] > size[b] || (size[a] === size[b] && minNode[a] < minNode[b]);

  let largest = 0; // a root; all singletons, so node 0 by the tie rule
  join[0] = 0;
  for (const ev of mergeTree) {
    let big = find(ev.edge[0]);
    let small = find(ev.edge[1]);
    if (big === small) continue;
    if (members[big].length < members[small].length) [big, small] = [small, big];
    const bigWas = big === largest;
    const smallWas = small === largest;
    if (bigWas) for (const v of members[small]) join[v] = ev.value;
    else if (smallWas) for (const v of members[big]) join[v] = ev.value;
    parent[small] = big;
    size[big] += size[small];
    minNode[big] = Math.min(minNode[big], minNode[small]);
    for (const v of members[small]) members[big].push(v);
    members[small] = [];
    if (bigWas || smallWas) {
      largest = big;
    } else if (beats(big, largest)) {
      // A component other than the largest has outgrown it: the old one's nodes are out again.
      for (const v of members[largest]) join[v] = NaN;
      for (const v of members[big]) join[v] = ev.value;
      largest = big;
    }
  }
  return join;
}

/**
 * h0_birth_component_lifetime of every node: the elder rule's H0 interval of the node
 * (Edelsbrunner & Harer 2010, VII.1), survivors clipped at `end`.
 *
 *   h0BirthComponentLifetime(3, [{value: 1, …, survivor: 1, absorbed: 2}, {value: 2, …, survivor: 0, absorbed: 1}], 5)
 *   → [5, 2, 1]
 */
export function h0BirthComponentLifetime(n: number, mergeTree: MergeEvent[], end: number): Float64Array {
  const out = new Float64Array(n).fill(end);
  for (const ev of mergeTree) out[ev.absorbed] = ev.value;
  return out;
}
