import type { VolumeGeometry } from '@emberline/shared';
import type { ClearanceReply } from './clearance-protocol';
import { LiveClearance } from './live-clearance';
import { readableFieldProblem } from './drafting-panel';

/** 16 × 16 × 4 voxels of 1 mm; one portal vein voxel (label 4) at (8, 8, 2). */
const geometry: VolumeGeometry = {
  dimensions: [16, 16, 4],
  spacingMm: [1, 1, 1],
  originLps: [0, 0, 0],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const labels = new Uint8Array(16 * 16 * 4);
labels[8 + 16 * (8 + 16 * 2)] = 4;

function until(replies: ClearanceReply[], type: ClearanceReply['type']): Promise<void> {
  return new Promise((resolve) => {
    const check = () =>
      replies.some((reply) => reply.type === type) ? resolve() : setTimeout(check, 1);
    check();
  });
}

describe('LiveClearance without a worker', () => {
  it('computes the fields on the page, kind by kind, then measures paths', async () => {
    const replies: ClearanceReply[] = [];
    const clearance = new LiveClearance(
      (reply) => replies.push(reply),
      () => null,
    );
    expect(clearance.usesWorker).toBe(false);
    clearance.load({
      labels,
      geometry,
      kinds: [{ kind: 'portal-vein', labelValues: [4] }],
      paddingMm: 30,
    });
    await until(replies, 'fields-ready');
    expect(replies.map((reply) => reply.type)).toEqual(['kind-ready', 'fields-ready']);
    // A path along i at j = 13, k = 2 passes 5 mm from the vessel voxel's centre, 4.5 mm from
    // its face (y = 8.5 mm): the clearance is measured to the faces, as the assessment does.
    clearance.measure([{ entryLps: [0, 13, 2], targetLps: [15, 13, 2] }]);
    await until(replies, 'figures');
    const figures = replies.find((reply) => reply.type === 'figures');
    expect(figures?.type === 'figures' && figures.figures[0].clearances[0].clearanceMm).toBeCloseTo(
      4.5,
      5,
    );
    clearance.dispose();
  });

  it('answers only the newest of the paths asked for while one is being answered', async () => {
    const replies: ClearanceReply[] = [];
    const clearance = new LiveClearance(
      (reply) => replies.push(reply),
      () => null,
    );
    clearance.load({
      labels,
      geometry,
      kinds: [{ kind: 'portal-vein', labelValues: [4] }],
      paddingMm: 30,
    });
    await until(replies, 'fields-ready');
    clearance.measure([{ entryLps: [0, 13, 2], targetLps: [15, 13, 2] }]);
    clearance.measure([{ entryLps: [0, 12, 2], targetLps: [15, 12, 2] }]);
    clearance.measure([{ entryLps: [0, 11, 2], targetLps: [15, 11, 2] }]);
    await new Promise((resolve) => setTimeout(resolve, 20));
    const answered = replies
      .filter((reply) => reply.type === 'figures')
      .map((reply) =>
        reply.type === 'figures' ? reply.figures[0].clearances[0].clearanceMm : null,
      );
    expect(answered.length).toBe(2);
    // To the vessel voxel's face at y = 8.5 mm: from j = 13, 4.5 mm; from j = 11, 2.5 mm.
    expect(answered[0]).toBeCloseTo(4.5, 5);
    expect(answered[1]).toBeCloseTo(2.5, 5);
    clearance.dispose();
  });
});

describe('server field problems', () => {
  it('names the applicator by its number from 1 and the field in words', () => {
    expect(readableFieldProblem('applicators.1.powerW: Power (W) must be at most 80')).toBe(
      'Applicator 2, power (W): Power (W) must be at most 80',
    );
    expect(readableFieldProblem('applicators.0.entry.2: A coordinate must be finite')).toBe(
      'Applicator 1, entry: A coordinate must be finite',
    );
    expect(readableFieldProblem('seriesId: not one of the case')).toBe(
      'seriesId: not one of the case',
    );
  });
});
