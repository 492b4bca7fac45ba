/**
 * Minimum-cost perfect assignment in a square cost matrix: the Hungarian method of Kuhn (1955)
 * and Munkres (1957) in its shortest-augmenting-path form with dual potentials, O(N³)
 * (Burkard, Dell'Amico & Martello 2009, Assignment Problems). It starts from the column
 * and row reductions of Jonker & Volgenant (1987, Computing 38) and a greedy matching on the
 * edges they make tight, so only the rows left unmatched need an augmenting path.
 *
 *   minimumAssignment(Float64Array.of(4, 1, 2, 3), 2)  // { rowToCol: [1, 0], cost: 3 }
 */
export function minimumAssignment(cost: Float64Array, n: number): { rowToCol: Int32Array; cost: number } {
  // Potentials u (rows), v (columns); colToRow[c] = row matched to column c, 1-based with 0 = free.
  const u = new Float64Array(n + 1);
  const v = new Float64Array(n + 1);
  const colToRow = new Int32Array(n + 1);
  const way = new Int32Array(n + 1);
  const minSlack = new Float64Array(n + 1);
  const used = new Uint8Array(n + 1);
  // Dual start: v_c = min_r cost, then u_r = min_c (cost − v_c); every reduced cost stays ≥ 0.
  for (let c = 1; c <= n; c++) {
    let m = Infinity;
    for (let r = 0; r < n; r++) m = Math.min(m, cost[r * n + c - 1]);
    v[c] = m;
  }
  const rowMatched = new Uint8Array(n + 1);
  for (let r = 1; r <= n; r++) {
    let m = Infinity;
    const base = (r - 1) * n;
    for (let c = 1; c <= n; c++) m = Math.min(m, cost[base + c - 1] - v[c]);
    u[r] = m;
    for (let c = 1; c <= n; c++) {
      if (colToRow[c] === 0 && cost[base + c - 1] - v[c] - m === 0) {
        colToRow[c] = r;
        rowMatched[r] = 1;
        break;
      }
    }
  }
  for (let row = 1; row <= n; row++) {
    if (rowMatched[row]) continue;
    colToRow[0] = row;
    let c0 = 0;
    minSlack.fill(Infinity);
    used.fill(0);
    do {
      used[c0] = 1;
      const r0 = colToRow[c0];
      let delta = Infinity;
      let c1 = 0;
      const base = (r0 - 1) * n;
      for (let c = 1; c <= n; c++) {
        if (used[c]) continue;
        const slack = cost[base + c - 1] - u[r0] - v[c];
        if (slack < minSlack[c]) {
          minSlack[c] = slack;
          way[c] = c0;
        }
        if (minSlack[c] < delta) {
          delta = minSlack[c];
          c1 = c;
        }
      }
      for (let c = 0; c <= n; c++) {
        if (used[c]) {
          u[colToRow[c]] += delta;
          v[c] -= delta;
        } else minSlack[c] -= delta;
      }
      c0 = c1;
    } while (colToRow[c0] !== 0);
    // Flip the alternating path back to the root.
    do {
      const c1 = way[c0];
      colToRow[c0] = colToRow[c1];
      c0 = c1;
    } while (c0 !== 0);
  }
  const rowToCol = new Int32Array(n);
  let total = 0;
  for (let c = 1; c <= n; c++) {
    rowToCol[colToRow[c] - 1] = c - 1;
    total += cost[(colToRow[c] - 1) * n + c - 1];
  }
  return { rowToCol, cost: total };
}
