/**
 * The contract's words for an option, as the form shows them: what it does, its CLI flag and its
 * default (electron/contract.ts OPTIONS), so the app and `loopwise --help` say the same thing.
 */
import { OPTIONS } from '../../../electron/contract.ts';

/** "help (CLI --flag; default …)" for a field such as 'cohort.nodes', or '' when the contract has none. */
export function optionHint(field: string): string {
  const o = OPTIONS.find((x) => x.field === field);
  if (!o) return '';
  return `${o.help} (command line: ${o.option ?? 'see loopwise --help'}; default: ${o.default})`;
}
