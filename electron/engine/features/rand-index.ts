/**
 * Adjusted Rand index between two partitions of the same items (L. Hubert, P. Arabie (1985),
 * Comparing partitions, J Classification 2):
 *   ARI = (Σᵢⱼ C(nᵢⱼ, 2) − E) / (½(Σᵢ C(aᵢ, 2) + Σⱼ C(bⱼ, 2)) − E),  E = Σᵢ C(aᵢ, 2) Σⱼ C(bⱼ, 2) / C(n, 2)
 * with nᵢⱼ the contingency table and aᵢ, bⱼ its margins. When the denominator vanishes (both
 * partitions are one cluster, or both all singletons) the partitions agree and the value is 1.
 *
 *   adjustedRandIndex([0, 0, 1, 1], [1, 1, 0, 0]) → 1
 */
export function adjustedRandIndex(a: ArrayLike<string | number>, b: ArrayLike<string | number>): number {
  const n = a.length;
  if (b.length !== n) throw new RangeError(`partitions differ in length: ${n} and ${b.length}`);
  const pairs = (x: number): number => (x * (x - 1)) / 2;
  const cells = new Map<string, number>();
  const rowsM = new Map<string | number, number>();
  const colsM = new Map<string | number, number>();
  for (let i = 0; i < n; i++) {
    const key = `${typeof a[i]}:${a[i]}\u0000${typeof b[i]}:${b[i]}`;
    cells.set(key, (cells.get(key) ?? 0) + 1);
    rowsM.set(a[i], (rowsM.get(a[i]) ?? 0) + 1);
    colsM.set(b[i], (colsM.get(b[i]) ?? 0) + 1);
  }
  let index = 0;
  for (const c of cells.values()) index += pairs(c);
  let sa = 0;
  for (const c of rowsM.values()) sa += pairs(c);
  let sb = 0;
  for (const c of colsM.values()) sb += pairs(c);
  const total = pairs(n);
  const expected = total > 0 ? (sa * sb) / total : 0;
  const max = (sa + sb) / 2;
  if (max === expected) return 1;
  return (index - expected) / (max - expected);
}
