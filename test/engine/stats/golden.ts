// Loads the committed reference values made by test/reference/make_stats_refs.py and .R.
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const dir = fileURLToPath(new URL('../../reference/goldens/stats/', import.meta.url));

export function golden<T>(name: string): T {
  return JSON.parse(readFileSync(dir + name, 'utf8')) as T;
}
