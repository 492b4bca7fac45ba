/**
 * False discovery rate: Benjamini–Hochberg step-up q-values (Benjamini & Hochberg 1995,
 * J. R. Stat. Soc. B 57): q_(i) = min_{k ≥ i} min(1, m p_(k) / k) over the sorted p-values.
 * Missing p-values (NaN) are left out of m and get NaN.
 *
 *   bhQValues([0.01, 0.04, 0.03, 0.2])  // [0.04, 0.0533…, 0.0533…, 0.2]
 */
export function bhQValues(p: ArrayLike<number>): Float64Array {
  const q = new Float64Array(p.length).fill(NaN);
  const idx: number[] = [];
  for (let i = 0; i < p.length; i++) if (!Number.isNaN(p[i])) idx.push(i);
  idx.sort((i, j) => p[i] - p[j]);
  const m = idx.length;
  let running = 1;
  for (let k = m - 1; k >= 0; k--) {
    const i = idx[k];
    running = Math.min(running, (m * p[i]) / (k + 1));
    q[i] = running;
  }
  return q;
}
