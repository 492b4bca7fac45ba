/**
 * Persistence images (H. Adams, T. Emerson, M. Kirby, R. Neville, C. Peterson, P. Shipman,
 * S. Chepushtanova, E. Hanson, F. Motta, L. Ziegelmeier (2017), Persistence images: a stable vector
 * representation of persistent homology, JMLR 18).
 *
 * Each finite interval becomes the point (birth, persistence = death − birth) carrying a Gaussian of
 * standard deviation σ, normalised to unit mass, weighted linearly in persistence:
 *   w(p) = min(1, p / pMax),  pMax = the upper end of the cohort's persistence range
 * (Adams et al.'s piecewise-linear weight, 0 on the diagonal). The surface
 *   ρ(x, y) = Σᵢ w(pᵢ) · exp(−((x − bᵢ)² + (y − pᵢ)²) / (2σ²)) / (2πσ²)
 * is sampled at a grid of points spanning the ranges, endpoints included. Adams et al. integrate ρ
 * over each pixel; the sample at a pixel's centre times the pixel's area is the midpoint-rule value
 * of that integral, and we keep the density so values do not change with resolution. This is the
 * convention of gudhi.representations.PersistenceImage (sampled at np.linspace of its im_range).
 *
 * Range, resolution and σ are fixed for the whole cohort (cohortImageSpec) so images are comparable.
 */
import type { Interval, PersistenceResult } from '../types.ts';
import { grid } from './grid.ts';

export interface PersistenceImageSpec {
  dim: number;
  birthRange: [number, number];
  persistenceRange: [number, number];
  /** [birth samples, persistence samples]. */
  resolution: [number, number];
  sigma: number;
}

/**
 * The cohort-wide image layout for dimension `dim`: births from the smallest to the largest finite
 * birth in the cohort, persistence from 0 to the largest finite lifetime; σ defaults to a tenth of
 * the persistence range (our default, not from the paper).
 *
 *   cohortImageSpec(results, 1, [20, 20]) → {birthRange: [min b, max b], persistenceRange: [0, max l], …}
 */
export function cohortImageSpec(
  results: PersistenceResult[],
  dim: number,
  resolution: [number, number] = [20, 20],
  sigma?: number,
): PersistenceImageSpec {
  let bLo = Infinity;
  let bHi = -Infinity;
  let pHi = 0;
  for (const r of results) {
    for (const { birth, death } of r.diagrams[dim] ?? []) {
      if (!Number.isFinite(death)) continue;
      bLo = Math.min(bLo, birth);
      bHi = Math.max(bHi, birth);
      pHi = Math.max(pHi, death - birth);
    }
  }
  if (!Number.isFinite(bLo)) {
    bLo = 0;
    bHi = 0;
  }
  const s = sigma ?? (pHi > 0 ? pHi / 10 : 1);
  return { dim, birthRange: [bLo, bHi], persistenceRange: [0, pHi], resolution, sigma: s };
}

/**
 * The image as a flat array, persistence-major: value at (birth sample i, persistence sample j)
 * sits at j · resolution[0] + i (the layout of gudhi's flattened image).
 *
 *   persistenceImage([{birth: 0, death: 1}], {dim: 1, birthRange: [0, 0], persistenceRange: [0, 1],
 *     resolution: [1, 2], sigma: 1}) → [e^(−1/2)/(2π), 1/(2π)]   (the point (0, 1) has weight 1)
 */
export function persistenceImage(diagram: Interval[], spec: PersistenceImageSpec): Float64Array {
  const [nb, np] = spec.resolution;
  if (!(spec.sigma > 0)) throw new RangeError(`persistence image σ must be > 0, got ${spec.sigma}`);
  const xs = grid(spec.birthRange[0], spec.birthRange[1], nb);
  const ys = grid(spec.persistenceRange[0], spec.persistenceRange[1], np);
  const pMax = spec.persistenceRange[1];
  const img = new Float64Array(nb * np);
  const twoS2 = 2 * spec.sigma * spec.sigma;
  const norm = 1 / (Math.PI * twoS2);
  for (const { birth, death } of diagram) {
    if (!Number.isFinite(death)) continue;
    const p = death - birth;
    const w = pMax > 0 ? Math.min(1, p / pMax) : 0;
    if (w === 0) continue;
    for (let j = 0; j < np; j++) {
      const gy = Math.exp(-((ys[j] - p) ** 2) / twoS2);
      for (let i = 0; i < nb; i++)
        img[j * nb + i] += w * norm * gy * Math.exp(-((xs[i] - birth) ** 2) / twoS2);
    }
  }
  return img;
}
