/**
 * The filtration options shared by `loopwise diagram` and `loopwise analyze`:
 * --input, --transform, --max-dim, --cap-distance, --cap-density.
 */
import { DEFAULT_TRANSFORM, TRANSFORMS_FOR } from '../engine/transform.ts';
import type { InputKind, TransformName } from '../engine/transform.ts';
import type { CapSetting } from '../engine/types.ts';
import { UsageError, choiceOption, numberOption } from './args.ts';
import type { ParsedArgs } from './args.ts';

export const FILTRATION_VALUE_OPTIONS = ['input', 'transform', 'max-dim', 'cap-distance', 'cap-density'];

const INPUTS = ['correlation', 'weight', 'distance'] as const;
const ALL_TRANSFORMS = ['one-minus', 'one-minus-abs', 'sqrt', 'inverse', 'neg-log', 'identity'] as const;

export interface FiltrationOptions {
  input: InputKind;
  transform: TransformName;
  maxDim: 1 | 2;
  cap: CapSetting;
}

export function filtrationOptions(p: ParsedArgs): FiltrationOptions {
  const input = choiceOption(p, 'input', INPUTS) ?? 'correlation';
  const transform = choiceOption(p, 'transform', ALL_TRANSFORMS) ?? DEFAULT_TRANSFORM[input];
  if (!TRANSFORMS_FOR[input].includes(transform)) {
    throw new UsageError(
      `--transform ${transform} does not apply to --input ${input} (use ${TRANSFORMS_FOR[input].join(', ')})`,
    );
  }
  const maxDim = (numberOption(p, 'max-dim', (x) => x === 1 || x === 2, '1 or 2') ?? 1) as 1 | 2;
  const capDistance = numberOption(p, 'cap-distance', (x) => x >= 0, 'a distance ≥ 0');
  const capDensity = numberOption(p, 'cap-density', (x) => x > 0 && x <= 1, 'a fraction in (0, 1]');
  if (capDistance !== undefined && capDensity !== undefined) {
    throw new UsageError('give --cap-distance or --cap-density, not both');
  }
  const cap: CapSetting =
    capDistance !== undefined
      ? { kind: 'distance', value: capDistance }
      : capDensity !== undefined
        ? { kind: 'density', value: capDensity }
        : { kind: 'none' };
  return { input, transform, maxDim, cap };
}
