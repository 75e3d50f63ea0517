// Checks shared by the sweep tests: every item of a sweep re-verified against its own grid point's problem, and
// von Neumann points of entanglement-based BB84 compared with 1 − h(Q_X) (Shor & Preskill, PRL 85, 441, 2000).
import { expect } from 'vitest';
import type { RemoteBatchItem } from '../../src/client/client.js';
import { gridPoints } from '../../src/client/sweep.js';
import { verifyResult } from '../../src/certificate/verify.js';
import { problemFromJson } from '../../src/problem/validate.js';
import { entropyRequestFrom } from '../../src/problem/entropy-request.js';
import type { ParameterGrid } from '../../src/service/generated/renyibound/v1/ParameterGrid.js';
import { binaryEntropy } from '../service/harness.js';

/** Every grid point exactly once, each with a CERTIFIED result whose certificate verifies for that point. */
export function expectEveryPointVerified(grid: ParameterGrid, items: RemoteBatchItem[], gap: number): void {
  const points = gridPoints(grid);
  expect(items.map((i) => i.index).sort((a, b) => a - b)).toEqual(points.map((p) => p.index));
  for (const item of items) {
    const point = points[item.index];
    expect(item.error, `point ${item.index}`).toBeUndefined();
    expect(item.result!.status).toBe('CERTIFIED');
    const input = point.input!;
    const report = verifyResult(problemFromJson(input.problemJson), entropyRequestFrom(input.entropy!, input.alpha), item.result!);
    expect(report.valid, `point ${item.index}: ${report.reason}`).toBe(true);
    if (grid.example === 'bb84-entangled' && input.entropy === 'VON_NEUMANN') {
      const qberX = item.point['qber-x'] ?? Number(grid.baseParameters?.['qber-x'] ?? 0.05);
      expect(Math.abs(item.result!.certifiedLowerBound! - (1 - binaryEntropy(qberX)))).toBeLessThanOrEqual(gap);
    }
  }
}

/** The CSV's index column: every index once, in grid order. */
export function expectCsvInGridOrder(csv: string, count: number): void {
  const indices = csv.trim().split('\n').slice(1).map((line) => Number(line.split(',')[0]));
  expect(indices).toEqual(Array.from({ length: count }, (_, i) => i));
}
