/** Per-subject topological features, node participation and group summaries. */
export * from './grid.ts';
export * from './interval-stats.ts';
export * from './betti.ts';
export * from './euler.ts';
export * from './landscape.ts';
export * from './h1-participation.ts';
export * from './h0-merge-tree.ts';
export * from './networks.ts';
export * from './group.ts';
export * from './columns.ts';
export * from './rows.ts';
export * from './curves.ts';
