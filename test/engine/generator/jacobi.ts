/**
 * Eigenvalues of a symmetric matrix by the cyclic Jacobi method (Jacobi 1846; Golub & Van Loan,
 * Matrix Computations, 4th ed., §8.5): sweep over every off-diagonal pair (p, q), annihilating
 * a_pq with a plane rotation, until the off-diagonal mass is negligible. Slow (O(n³) per sweep)
 * but simple and accurate to a few ulps of ‖A‖ — enough to test positive semi-definiteness of
 * the generator's matrices independently of the generator's own arithmetic.
 *
 *   jacobiEigenvalues(Float64Array.of(2, 1, 1, 2), 2) → [1, 3]
 */
export function jacobiEigenvalues(values: Float64Array, n: number): number[] {
  const a = Float64Array.from(values);
  const at = (i: number, j: number): number => a[i * n + j];
  let total = 0;
  for (let k = 0; k < n * n; k++) total += a[k] * a[k];
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (i !== j) off += at(i, j) * at(i, j);
    if (off <= 1e-30 * total) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = at(p, q);
        if (apq === 0) continue;
        const tau = (at(q, q) - at(p, p)) / (2 * apq);
        const t = (tau >= 0 ? 1 : -1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          if (k === p || k === q) continue;
          const akp = at(k, p);
          const akq = at(k, q);
          const bkp = c * akp - s * akq;
          const bkq = s * akp + c * akq;
          a[k * n + p] = a[p * n + k] = bkp;
          a[k * n + q] = a[q * n + k] = bkq;
        }
        a[p * n + p] -= t * apq;
        a[q * n + q] += t * apq;
        a[p * n + q] = a[q * n + p] = 0;
      }
    }
  }
  const eig: number[] = [];
  for (let i = 0; i < n; i++) eig.push(a[i * n + i]);
  return eig.sort((x, y) => x - y);
}
