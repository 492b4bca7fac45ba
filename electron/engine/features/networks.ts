/**
 * Network-level aggregation: a node measure averaged over the nodes of each network (module) named
 * in the node table. Nodes without a network and NaN values are left out of the means; networks are
 * listed in order of first appearance in the node table.
 *
 *   networkMeans([1, 2, 3, NaN], ['DMN', 'DMN', 'VIS', 'VIS']) → [{network: 'DMN', mean: 1.5, nodes: 2}, {network: 'VIS', mean: 3, nodes: 1}]
 */
export function networkMeans(
  values: ArrayLike<number>,
  networks: ArrayLike<string | null>,
): Array<{ network: string; mean: number; nodes: number }> {
  if (values.length !== networks.length) {
    throw new RangeError(`${values.length} node values but ${networks.length} network labels`);
  }
  const sums = new Map<string, { sum: number; count: number }>();
  for (let i = 0; i < values.length; i++) {
    const net = networks[i];
    if (net === null || net === '') continue;
    const entry = sums.get(net) ?? { sum: 0, count: 0 };
    if (!sums.has(net)) sums.set(net, entry);
    if (Number.isNaN(values[i])) continue;
    entry.sum += values[i];
    entry.count++;
  }
  return [...sums].map(([network, { sum, count }]) => ({
    network,
    mean: count > 0 ? sum / count : NaN,
    nodes: count,
  }));
}
