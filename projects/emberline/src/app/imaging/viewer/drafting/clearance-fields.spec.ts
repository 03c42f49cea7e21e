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

  it('reads 3 mm from a path passing three voxels beside a vessel voxel in-plane', () => {
    // The path runs along i at j = 13, k = 5: the nearest point (12, 13, 5) lies 3 mm from the
    // vessel voxel centre (12, 10, 5) — point-to-line distance, by hand. Samples every 0.5 mm
    // hit x = 12 exactly, a voxel centre, where the interpolated field is exact.
    const figures = pathFigures([field('portal-vein')], [2, 13, 10], [22, 13, 10]);
    const vessel = figures.clearances[0];
    expect(vessel.clearanceMm).toBeCloseTo(3, 5);
    expect(vessel.nearestLps?.[0]).toBeCloseTo(12, 5);
    expect(vessel.insideMm).toBe(0);
    expect(figures.lengthMm).toBeCloseTo(20, 12);
  });

  it('counts the slice spacing across slices: two slices away is 4 mm at 2 mm a slice', () => {
    // Path along i at j = 10, k = 7 (z = 14 mm): the vessel centre is at z = 10 mm.
    const vessel = pathFigures([field('portal-vein')], [2, 10, 14], [22, 10, 14]).clearances[0];
    expect(vessel.clearanceMm).toBeCloseTo(4, 5);
  });

  it('measures the length a path runs inside a structure', () => {
    // Along the 5-voxel tumour block (x = 8…12 mm, voxel faces at 7.5 and 12.5 mm): 5 mm,
    // within half a sampling step (0.25 mm) at each of the two crossings.
    const tumour = pathFigures([field('tumour')], [0, 4, 4], [20, 4, 4]).clearances[0];
    expect(tumour.clearanceMm).toBe(0);
    expect(Math.abs(tumour.insideMm - 5)).toBeLessThanOrEqual(0.5);
  });

  it('says "beyond reach" rather than a wrong figure when the path passes outside the field', () => {
    // A 2 mm padding keeps the vessel's field to x 10…14, y 8…12, z 8…12 (voxels 4…6); a
    // path 8 mm away never enters it.
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
