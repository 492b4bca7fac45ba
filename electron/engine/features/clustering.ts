/**
 * Clustering the nodes by their cycle-participation rows: average-linkage (UPGMA) agglomerative
 * clustering (R. Sokal, C. Michener (1958), A statistical method for evaluating systematic
 * relationships, Univ Kansas Sci Bull 38; Lance–Williams update, G. Lance, W. Williams (1967),
 * Computer J 9) on cosine distance, cut at k clusters. Deterministic: among equal distances the
 * pair with the smaller (i, j) merges first.
 */

/**
 * Cosine distance 1 − ⟨x, y⟩ / (‖x‖‖y‖) between the rows of a row-major matrix, as a full n × n
 * array. Two all-zero rows (nodes in no cycle) are at distance 0; a zero row is at distance 1 from
 * any other row (cosine is undefined there; 1 is "no shared direction").
 *
 *   cosineDistances(Float64Array.of(1, 0, 0, 1, 1, 1), 3, 2) → d(0, 1) = 1, d(0, 2) = 1 − 1/√2
 */
export function cosineDistances(values: Float64Array, rows: number, cols: number): Float64Array {
  const norms = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    let s = 0;
    for (let c = 0; c < cols; c++) s += values[i * cols + c] ** 2;
    norms[i] = Math.sqrt(s);
  }
  const d = new Float64Array(rows * rows);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < i; j++) {
      let v: number;
      if (norms[i] === 0 || norms[j] === 0) v = norms[i] === norms[j] ? 0 : 1;
      else {
        let dot = 0;
        for (let c = 0; c < cols; c++) dot += values[i * cols + c] * values[j * cols + c];
        v = Math.max(0, 1 - dot / (norms[i] * norms[j]));
      }
      d[i * rows + j] = d[j * rows + i] = v;
    }
  }
  return d;
}

/** One agglomeration step: clusters named by their lowest original node; `height` the average distance. */
export interface LinkageStep {
  a: number;
  b: number;
  height: number;
  size: number;
}

/**
 * Average-linkage merges of n items from a full distance matrix (O(n³), fine for atlas sizes).
 *
 *   averageLinkage(Float64Array.of(0, 1, 4, 1, 0, 3, 4, 3, 0), 3)
 *   → [{a: 0, b: 1, height: 1, size: 2}, {a: 0, b: 2, height: 3.5, size: 3}]
 */
export function averageLinkage(dist: Float64Array, n: number): LinkageStep[] {
  const d = Float64Array.from(dist);
  const size = new Int32Array(n).fill(1);
  const active = new Uint8Array(n).fill(1);
  const steps: LinkageStep[] = [];
  for (let step = 0; step < n - 1; step++) {
    let best = Infinity;
    let bi = -1;
    let bj = -1;
    for (let i = 0; i < n; i++) {
      if (!active[i]) continue;
      for (let j = i + 1; j < n; j++) {
        if (!active[j]) continue;
        const v = d[i * n + j];
        if (v < best) {
          best = v;
          bi = i;
          bj = j;
        }
      }
    }
    if (bi < 0) break;
    // Lance–Williams for average linkage: d(i∪j, x) = (|i| d(i, x) + |j| d(j, x)) / (|i| + |j|).
    const si = size[bi];
    const sj = size[bj];
    for (let x = 0; x < n; x++) {
      if (!active[x] || x === bi || x === bj) continue;
      const v = (si * d[bi * n + x] + sj * d[bj * n + x]) / (si + sj);
      d[bi * n + x] = d[x * n + bi] = v;
    }
    size[bi] = si + sj;
    active[bj] = 0;
    steps.push({ a: bi, b: bj, height: best, size: si + sj });
  }
  return steps;
}

/**
 * Labels 0 … k−1 after the first n − k merges, numbered in order of each cluster's lowest node.
 *
 *   cutTree(averageLinkage(…3 items…), 3, 2) → [0, 0, 1]
 */
export function cutTree(steps: LinkageStep[], n: number, k: number): Int32Array {
  if (!Number.isInteger(k) || k < 1) throw new RangeError(`number of clusters must be ≥ 1, got ${k}`);
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (x: number): number => {
    while (parent[x] !== x) x = parent[x] = parent[parent[x]];
    return x;
  };
  for (let s = 0; s < Math.min(steps.length, Math.max(0, n - k)); s++) {
    const a = find(steps[s].a);
    const b = find(steps[s].b);
    if (a !== b) parent[Math.max(a, b)] = Math.min(a, b);
  }
  const labels = new Int32Array(n);
  const names = new Map<number, number>();
  for (let i = 0; i < n; i++) {
    const r = find(i);
    if (!names.has(r)) names.set(r, names.size);
    labels[i] = names.get(r)!;
  }
  return labels;
}

/**
 * Nodes clustered by their rows of a participation matrix: cosine distance, average linkage, k clusters.
 *
 *   clusterRows(participationMatrix(n, reps, {}, 'lifetime'), 4) → one label per node
 */
export function clusterRows(m: { rows: number; cols: number; values: Float64Array }, k: number): Int32Array {
  return cutTree(averageLinkage(cosineDistances(m.values, m.rows, m.cols), m.rows), m.rows, k);
}
