/**
 * Small dense linear algebra for the statistics: orthonormal bases with rank detection,
 * triangular solves, Cholesky, and a symmetric eigensolver.
 *
 * Orthonormal bases come from Gram–Schmidt with one full re-orthogonalisation pass
 * ("twice is enough": Giraud, Langou & Rozložník 2005, Comput. Math. Appl.), which gives
 * orthogonality to working precision, so least squares through Q and R is as accurate as
 * Householder QR (Björck 1996, Numerical Methods for Least Squares Problems).
 * Eigenvalues: cyclic Jacobi rotations (Golub & Van Loan, Matrix Computations, 4th ed. 2013,
 * on Jacobi methods), accurate for the modest, dense symmetric matrices met here (subjects × subjects).
 *
 *   const { q, r, kept } = orthonormalize([Float64Array.of(1, 1, 1), Float64Array.of(1, 2, 3)]);
 *   // kept = [0, 1]; q[0] = (1,1,1)/√3; r is 2 × 2 upper triangular with columns = q · r
 */

/** Dot product of two equal-length vectors. */
export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return s;
}

export interface Orthonormalized {
  /** Orthonormal vectors spanning the kept columns, in order. */
  q: Float64Array[];
  /** r[k][j]: coefficient of q[k] in column kept[j] (upper triangular, kept.length × kept.length). */
  r: Float64Array[];
  /** Indices of the input columns that were independent of the ones before them. */
  kept: number[];
  /** Indices of the columns dropped as (numerically) dependent on earlier ones. */
  dropped: number[];
}

/**
 * Orthonormalises `columns` in order; a column whose component orthogonal to the earlier ones
 * has norm ≤ tol · (its own norm) is dropped as dependent (and a zero column likewise).
 */
export function orthonormalize(columns: ArrayLike<number>[], tol = 1e-9): Orthonormalized {
  const q: Float64Array[] = [];
  const coef: number[][] = [];
  const kept: number[] = [];
  const dropped: number[] = [];
  for (let j = 0; j < columns.length; j++) {
    const v = Float64Array.from(columns[j]);
    const norm0 = Math.sqrt(dot(v, v));
    const c = new Array<number>(q.length).fill(0);
    for (let pass = 0; pass < 2; pass++) {
      for (let k = 0; k < q.length; k++) {
        const a = dot(q[k], v);
        c[k] += a;
        const qk = q[k];
        for (let i = 0; i < v.length; i++) v[i] -= a * qk[i];
      }
    }
    const norm = Math.sqrt(dot(v, v));
    if (norm0 === 0 || norm <= tol * norm0) {
      dropped.push(j);
      continue;
    }
    for (let i = 0; i < v.length; i++) v[i] /= norm;
    c.push(norm);
    q.push(v);
    coef.push(c);
    kept.push(j);
  }
  const p = kept.length;
  const r: Float64Array[] = [];
  for (let k = 0; k < p; k++) r.push(new Float64Array(p));
  for (let j = 0; j < p; j++) for (let k = 0; k <= j; k++) r[k][j] = coef[j][k];
  return { q, r, kept, dropped };
}

/** Solves R x = b for upper-triangular R (rows as arrays). */
export function solveUpper(r: ArrayLike<number>[], b: ArrayLike<number>): Float64Array {
  const p = b.length;
  const x = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = b[i];
    for (let k = i + 1; k < p; k++) s -= r[i][k] * x[k];
    x[i] = s / r[i][i];
  }
  return x;
}

/** Solves Rᵀ x = b for upper-triangular R. */
export function solveUpperTransposed(r: ArrayLike<number>[], b: ArrayLike<number>): Float64Array {
  const p = b.length;
  const x = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= r[k][i] * x[k];
    x[i] = s / r[i][i];
  }
  return x;
}

/**
 * Inverse of a small symmetric positive-definite matrix by Cholesky (Golub & Van Loan);
 * throws when the matrix is not positive definite.
 */
export function inverseSpd(a: number[][]): number[][] {
  const n = a.length;
  const l: number[][] = a.map(() => new Array<number>(n).fill(0));
  for (let j = 0; j < n; j++) {
    let s = a[j][j];
    for (let k = 0; k < j; k++) s -= l[j][k] * l[j][k];
    if (!(s > 0)) throw new Error('matrix is not positive definite');
    l[j][j] = Math.sqrt(s);
    for (let i = j + 1; i < n; i++) {
      let t = a[i][j];
      for (let k = 0; k < j; k++) t -= l[i][k] * l[j][k];
      l[i][j] = t / l[j][j];
    }
  }
  const inv: number[][] = a.map(() => new Array<number>(n).fill(0));
  for (let c = 0; c < n; c++) {
    // Solve L Lᵀ x = e_c.
    const y = new Array<number>(n).fill(0);
    for (let i = 0; i < n; i++) {
      let s = i === c ? 1 : 0;
      for (let k = 0; k < i; k++) s -= l[i][k] * y[k];
      y[i] = s / l[i][i];
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = y[i];
      for (let k = i + 1; k < n; k++) s -= l[k][i] * inv[k][c];
      inv[i][c] = s / l[i][i];
    }
  }
  return inv;
}

export interface Eigen {
  /** Eigenvalues in decreasing order. */
  values: Float64Array;
  /** vectors[k] is the unit eigenvector of values[k]. */
  vectors: Float64Array[];
}

/**
 * All eigenpairs of a symmetric matrix (row-major n × n) by cyclic Jacobi rotations
 * with the threshold strategy of Rutishauser (1971), to convergence of the off-diagonal mass.
 */
export function symmetricEigen(values: ArrayLike<number>, n: number): Eigen {
  const a = Float64Array.from(values);
  const v = new Float64Array(n * n);
  for (let i = 0; i < n; i++) v[i * n + i] = 1;
  let total = 0;
  for (let i = 0; i < n * n; i++) total += a[i] * a[i];
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let p = 0; p < n; p++) for (let q = p + 1; q < n; q++) off += a[p * n + q] * a[p * n + q];
    if (off <= 1e-30 * total || off === 0) break;
    const threshold = sweep < 3 ? (0.2 * Math.sqrt(off)) / (n * n) : 0;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = a[p * n + q];
        if (Math.abs(apq) <= threshold || apq === 0) continue;
        const app = a[p * n + p];
        const aqq = a[q * n + q];
        // The rotation that annihilates a[p][q], in the stable form of the 2 × 2 symmetric Schur
        // decomposition (Golub & Van Loan).
        const tau = (aqq - app) / (2 * apq);
        const t = Math.sign(tau || 1) / (Math.abs(tau) + Math.sqrt(1 + tau * tau));
        const c = 1 / Math.sqrt(1 + t * t);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = a[k * n + p];
          const akq = a[k * n + q];
          a[k * n + p] = c * akp - s * akq;
          a[k * n + q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = a[p * n + k];
          const aqk = a[q * n + k];
          a[p * n + k] = c * apk - s * aqk;
          a[q * n + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = v[k * n + p];
          const vkq = v[k * n + q];
          v[k * n + p] = c * vkp - s * vkq;
          v[k * n + q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => a[j * n + j] - a[i * n + i]);
  const vals = new Float64Array(n);
  const vecs: Float64Array[] = [];
  order.forEach((col, k) => {
    vals[k] = a[col * n + col];
    const vec = new Float64Array(n);
    for (let i = 0; i < n; i++) vec[i] = v[i * n + col];
    vecs.push(vec);
  });
  return { values: vals, vectors: vecs };
}
