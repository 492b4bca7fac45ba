import { describe, expect, it } from 'vitest';
import {
  diagramDistanceMatrix,
  slicedWasserstein,
  slicedWassersteinMatrix,
} from '../../../electron/engine/stats/diagram-distance.ts';
import type { DiagramPoint } from '../../../electron/engine/stats/diagram-distance.ts';
import { createRng } from '../../../electron/engine/random.ts';

describe('slicedWassersteinMatrix', () => {
  it('equals slicedWasserstein pair by pair, to the last bit (empty diagrams and ties included)', () => {
    const rng = createRng(17);
    const diagrams: DiagramPoint[][] = Array.from({ length: 24 }, (_, i) =>
      Array.from({ length: i % 6 === 0 ? 0 : 3 + rng.int(60) }, () => {
        const b = Math.round(rng.next() * 20) / 20; // quantised: many ties
        return [b, b + Math.round(rng.next() * 8) / 20] as DiagramPoint;
      }),
    );
    for (const directions of [1, 10, 50]) {
      const m = slicedWassersteinMatrix(diagrams, directions);
      for (let i = 0; i < diagrams.length; i++) {
        expect(m.values[i * diagrams.length + i]).toBe(0);
        for (let j = 0; j < i; j++) {
          const expected = slicedWasserstein(diagrams[i], diagrams[j], directions);
          expect(m.values[i * diagrams.length + j]).toBe(expected);
          expect(m.values[j * diagrams.length + i]).toBe(expected);
        }
      }
    }
  });

  it('is what diagramDistanceMatrix uses for the sliced metric', () => {
    const d: Array<Array<[number, number | null]>> = [
      [
        [0, 1],
        [0.2, 0.5],
      ],
      [[0.1, 0.9]],
      [
        [0, null],
        [0.3, 0.4],
      ],
    ];
    const m = diagramDistanceMatrix(d, { kind: 'sliced-wasserstein', directions: 12 });
    expect(m.values[1 * 3 + 0]).toBe(
      slicedWasserstein(
        [[0.1, 0.9]],
        [
          [0, 1],
          [0.2, 0.5],
        ],
        12,
      ),
    );
    // The infinite interval is dropped before the distance, as for the other metrics.
    expect(m.values[2 * 3 + 1]).toBe(slicedWasserstein([[0.3, 0.4]], [[0.1, 0.9]], 12));
  });
});
