import type { StructureKind, VolumeGeometry } from '@emberline/shared';
import { kindField, labelValuesByKind, pathFigures } from './clearance-fields';
import { ClearanceComputation } from './clearance-computation';

/**
 * A tiny hand-made label map: 24 × 20 × 10 voxels of 1 × 1 × 2 mm (anisotropic, as CT is),
 * axial, origin at (0, 0, 0). Label 4 (portal vein) is one voxel at (12, 10, 5); label 2
 * (tumour) a block of 5 voxels along i at j = 4, k = 2.
 */
const geometry: VolumeGeometry = {
  dimensions: [24, 20, 10],
  spacingMm: [1, 1, 2],
  originLps: [0, 0, 0],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const [nx, ny] = geometry.dimensions;
const labels = new Uint8Array(24 * 20 * 10);
labels[12 + nx * (10 + ny * 5)] = 4;
for (let i = 8; i < 13; i++) labels[i + nx * (4 + ny * 2)] = 2;
const structures: { labelValue: number; kind: StructureKind | null }[] = [
  { labelValue: 2, kind: 'tumour' },
  { labelValue: 4, kind: 'portal-vein' },
  { labelValue: 9, kind: null },
];

function field(kind: StructureKind, paddingMm = 30) {
  const entry = labelValuesByKind(structures).find((candidate) => candidate.kind === kind);
  const found = entry && kindField(labels, geometry, kind, entry.labelValues, paddingMm);
  if (!found) throw new Error(`no field for ${kind}`);
  return found;
}

describe('live clearance figures', () => {
  it('orders the kinds present, vessels before the tumour, and leaves unmapped labels out', () => {
    expect(labelValuesByKind(structures)).toEqual([
      { kind: 'portal-vein', labelValues: [4] },
      { kind: 'tumour', labelValues: [2] },
    ]);
  });

  it('reads 2.5 mm from a path passing three voxels beside a vessel voxel in-plane', () => {
    // The path runs along i at j = 13, k = 5, 3 mm from the vessel voxel centre (12, 10, 5)
    // and 2.5 mm from its cell's face at y = 10.5 mm (point-to-box distance, by hand): the
    // assessment's measure, to the faces. The nearest stretch runs over x = 11.5 … 12.5 mm;
    // the first point is given. The bound, the cell a voxel wider (y = 11.5 mm), is 1.5 mm.
    const figures = pathFigures([field('portal-vein')], [2, 13, 10], [22, 13, 10]);
    const vessel = figures.clearances[0];
    expect(vessel.clearanceMm).toBeCloseTo(2.5, 9);
    expect(vessel.lowerBoundMm).toBeCloseTo(1.5, 9);
    expect(vessel.nearestLps?.[0]).toBeCloseTo(11.5, 9);
    expect(vessel.insideMm).toBe(0);
    expect(figures.lengthMm).toBeCloseTo(20, 12);
  });

  it('counts the slice spacing across slices: two slices above is 3 mm to the top face', () => {
    // Path along i at j = 10, k = 7 (z = 14 mm): the vessel centre is at z = 10 mm, its cell's
    // top face at 11 mm (2 mm slices): 3 mm; a slice thicker, 1 mm.
    const vessel = pathFigures([field('portal-vein')], [2, 10, 14], [22, 10, 14]).clearances[0];
    expect(vessel.clearanceMm).toBeCloseTo(3, 9);
    expect(vessel.lowerBoundMm).toBeCloseTo(1, 9);
  });

  it('measures the length a path runs inside a structure', () => {
    // Along the 5-voxel tumour block (x = 8…12 mm, voxel faces at 7.5 and 12.5 mm): 5 mm,
    // within half a sampling step (0.25 mm) at each of the two crossings.
    const tumour = pathFigures([field('tumour')], [0, 4, 4], [20, 4, 4]).clearances[0];
    expect(tumour.clearanceMm).toBe(0);
    expect(Math.abs(tumour.insideMm - 5)).toBeLessThanOrEqual(0.5);
  });

  it('says "beyond reach" rather than a figure when the path keeps farther than the padding', () => {
    // With a 2 mm padding, a path 7.5 mm from the vessel voxel's face (y = 10.5 mm, path at
    // y = 18 mm) reads "more than 2 mm".
    const vessel = pathFigures([field('portal-vein', 2)], [0, 18, 10], [23, 18, 10]).clearances[0];
    expect(vessel.isBeyondReach).toBe(true);
    expect(vessel.clearanceMm).toBeNull();
  });

  it('gives the angle from the axial plane: a 3-4-5 path rising 40 of 50 mm is asin(0.8)', () => {
    const figures = pathFigures([], [0, 0, 0], [0, 30, 40]);
    expect(figures.lengthMm).toBeCloseTo(50, 12);
    expect(figures.angleFromAxialDeg).toBeCloseTo((Math.asin(0.8) * 180) / Math.PI, 12);
  });

  it('computes kind by kind and answers with the kinds ready so far', () => {
    const computation = new ClearanceComputation({
      labels,
      geometry,
      kinds: labelValuesByKind(structures),
      paddingMm: 30,
    });
    const path = {
      entryLps: [2, 13, 10] as [number, number, number],
      targetLps: [22, 13, 10] as [number, number, number],
    };
    expect(computation.figures([path])[0].clearances).toEqual([]);
    expect(computation.computeNext()?.kind).toBe('portal-vein');
    expect(computation.figures([path])[0].clearances.map((entry) => entry.kind)).toEqual([
      'portal-vein',
    ]);
    expect(computation.computeNext()?.kind).toBe('tumour');
    expect(computation.isDone).toBe(true);
    expect(computation.computeNext()).toBeNull();
  });
});
