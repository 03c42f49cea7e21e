import { describe, expect, it } from 'vitest';
import type { SafetyProfileBody } from '../api/safety-profiles';
import type { StructureKind } from '../api/structures';
import { voxelCount, type VolumeGeometry } from '../geometry/patient-geometry';
import { boxGeometry } from '../geometry/voxel-box';
import type { Vec3 } from '../geometry/vector';
import type { AssessmentStructure } from './assessment-input';
import { createDistanceFieldCache, type DistanceFieldCache } from './distance-field-cache';
import { voxelsPerKindCode, type CropContext } from './kind-fields';
import { takeLabelInventory } from './label-inventory';
import { cropBoxAround, cropLabels, kindCodesOf } from './plan-crop';
import { angulationFromAxialDeg, assessTrajectory } from './trajectory-safety';
import { extentOfLpsPoints } from './voxel-extent';

const spacingMm: Vec3 = [0.8, 0.8, 2];
const geometry: VolumeGeometry = {
  dimensions: [120, 70, 30],
  spacingMm,
  originLps: [-47.6, -27.6, -29],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};

const structures: AssessmentStructure[] = [
  { id: 'liver', labelValue: 1, kind: 'liver' },
  { id: 'tumour', labelValue: 2, kind: 'tumour' },
  { id: 'artery', labelValue: 3, kind: 'hepatic-artery' },
  { id: 'vein', labelValue: 4, kind: 'hepatic-vein' },
  { id: 'gallbladder', labelValue: 5, kind: 'gallbladder' },
];
const label = (kind: StructureKind) =>
  structures.find((structure) => structure.kind === kind)?.labelValue ?? 0;

const profile: SafetyProfileBody = {
  name: 'Test profile',
  structureRules: [
    { kind: 'hepatic-artery', minimumClearanceMm: 5, isCritical: true, source: 'test' },
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: false, source: 'test' },
  ],
  marginTargetMm: 5,
  marginTargetSource: 'test',
  marginMinimumMm: 0,
  marginMinimumSource: 'test',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['hepatic-vein'],
  heatSinkSource: 'test',
  maximumAngulationDeg: 60,
  angulationSource: 'test',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource: 'test',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'test',
  physicsToleranceMm: 2,
  physicsToleranceSource: 'common practice',
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource: 'common practice',
};

/** Labels every voxel whose centre lies inside (axis-aligned grid). */
function paint(labels: Uint8Array, value: number, isInside: (point: Vec3) => boolean): void {
  const [nx, ny, nz] = geometry.dimensions;
  const [ox, oy, oz] = geometry.originLps;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        if (isInside([ox + i * spacingMm[0], oy + j * spacingMm[1], oz + k * spacingMm[2]])) {
          labels[index] = value;
        }
      }
    }
  }
}

function trajectoryOf(
  labels: Uint8Array,
  entryLps: Vec3,
  tipLps: Vec3,
  marginMm: number,
  cache?: DistanceFieldCache,
) {
  const inventory = takeLabelInventory(labels, geometry.dimensions, structures);
  const box = cropBoxAround(geometry, [
    { extent: extentOfLpsPoints(geometry, [entryLps, tipLps]), marginMm },
  ]);
  if (!box) throw new Error('path off the grid');
  const crop: CropContext = {
    seriesKey: cache ? 'series-1' : null,
    cache,
    geometry: boxGeometry(geometry, box),
    box,
    kindCodes: kindCodesOf(cropLabels(labels, geometry, box), inventory.kindCodeOfLabel),
    inventory,
  };
  return assessTrajectory(
    {
      crop,
      seriesGeometry: geometry,
      labelMap: labels,
      pathMarginMm: marginMm,
      cropVoxelsPerKindCode: voxelsPerKindCode(crop.kindCodes),
    },
    { entryLps, tipLps, workingLengthMm: 150 },
    profile,
  );
}

function clearanceTo(figures: ReturnType<typeof trajectoryOf>, kind: StructureKind) {
  const clearance = figures.safety.clearances.find((entry) => entry.kind === kind);
  if (!clearance) throw new Error(`no clearance to ${kind}`);
  return clearance;
}

describe('assessTrajectory: clearance', () => {
  // A straight path along x at y = z = 0, and a hepatic artery of radius r along z at
  // x = 4 mm, y = s: the path passes s − r from its wall (distance between perpendicular lines).
  const [s, r] = [7, 1.5];
  const labels = new Uint8Array(voxelCount(geometry.dimensions));
  paint(labels, label('hepatic-artery'), ([x, y]) => Math.hypot(x - 4, y - s) <= r);
  const entry: Vec3 = [-40, 0, 0];
  const tip: Vec3 = [30, 0, 0];

  it('reads d − r beside a cylindrical vessel, to within half a voxel along the approach', () => {
    // The path approaches the artery along y (spacing 0.8 mm). Labelled by its centres, a
    // convex body's voxel faces lie within half a voxel of its surface along the direction of
    // approach (a centre inside the body holds its whole cell within half a cell of it; every
    // point deeper than half a cell lies in a labelled cell), so |clearance − (s − r)| ≤ 0.4 mm.
    const clearance = clearanceTo(trajectoryOf(labels, entry, tip, 20), 'hepatic-artery');
    expect(Math.abs(clearance.minDistanceMm - (s - r))).toBeLessThanOrEqual(spacingMm[1] / 2);
    // The bound widens every cell by a voxel: one spacing below the face distance along y,
    // never above the truth.
    expect(clearance.lowerBoundMm).toBeLessThanOrEqual(s - r);
    expect(clearance.lowerBoundMm).toBeCloseTo(clearance.minDistanceMm - spacingMm[1], 9);
    // Where: the analytic distance √(s² + (t − t₀)²) − r stays within a voxel of its minimum
    // only for |t − t₀| ≤ √((s + 2·0.8)² − s²); t₀ = 44 mm from the entry.
    const reachMm = Math.sqrt((s + 2 * spacingMm[1]) ** 2 - s * s);
    expect(Math.abs(clearance.atMm - 44)).toBeLessThanOrEqual(reachMm);
  });

  it('finds the same clearance exactly when the vessel lies beyond the crop', () => {
    // With a 4 mm crop margin the artery (5.5 mm off) is not in the crop: the clearance is then
    // measured against its boundary voxels on the whole series — the same cells, so the same
    // figures to rounding.
    const clearance = clearanceTo(trajectoryOf(labels, entry, tip, 4), 'hepatic-artery');
    const fromCrop = clearanceTo(trajectoryOf(labels, entry, tip, 20), 'hepatic-artery');
    expect(clearance.minDistanceMm).toBeCloseTo(fromCrop.minDistanceMm, 9);
    expect(clearance.lowerBoundMm).toBeCloseTo(fromCrop.lowerBoundMm ?? NaN, 9);
    expect(clearance.atMm).toBeCloseTo(fromCrop.atMm, 9);
  });

  it('keeps the boundary cells of the crop in the cache and reuses them', () => {
    const cache = createDistanceFieldCache();
    const stored: string[] = [];
    const spy: DistanceFieldCache = {
      get: (key) => cache.get(key),
      set: (key, value) => {
        stored.push(key);
        cache.set(key, value);
      },
    };
    const first = trajectoryOf(labels, entry, tip, 20, spy);
    expect(stored).toHaveLength(1);
    expect(stored[0]).toContain('series-1|hepatic-artery:3|cells|');
    const again = trajectoryOf(labels, entry, [30, 0.5, 0], 20, spy);
    expect(stored).toHaveLength(1);
    expect(again.safety.clearances).toHaveLength(first.safety.clearances.length);
  });
});

describe('assessTrajectory: what the path runs through', () => {
  // Along x from −40 to +40 mm at y = z = 0: liver on [−30, −15) and [−10, 8), a hepatic vein
  // tube crossing at x = −5 (radius 2 mm, along z), the tumour on [8, 20) inside the liver
  // block, a hepatic artery tube crossing at x = 25 (outside the liver).
  const labels = new Uint8Array(voxelCount(geometry.dimensions));
  const inBand = ([, y, z]: Vec3) => Math.abs(y) <= 10 && Math.abs(z) <= 10;
  paint(
    labels,
    label('liver'),
    (p) => inBand(p) && ((p[0] >= -30 && p[0] < -15) || (p[0] >= -10 && p[0] < 20)),
  );
  paint(labels, label('tumour'), (p) => inBand(p) && p[0] >= 8 && p[0] < 20);
  paint(labels, label('hepatic-vein'), ([x, y]) => Math.hypot(x + 5, y) <= 2);
  paint(labels, label('hepatic-artery'), ([x, y]) => Math.hypot(x - 25, y) <= 1.2);
  const figures = trajectoryOf(labels, [-40, 0, 0], [40, 0, 0], 20);
  // Voxelised along x (spacing 0.8 mm): a band of centres [a, b) spans its cells, within one
  // spacing of b − a; the label changes are placed within half a 0.5 mm step.
  const toleranceMm = spacingMm[0] + 0.5;

  it('measures the length inside each kind and marks the critical ones', () => {
    const lengthOf = (kind: StructureKind) =>
      figures.safety.traversed.find((entry) => entry.kind === kind)?.lengthMm ?? 0;
    // Liver 15 + 18 mm, less the 4 mm of vein inside it; tumour 12 mm; vein 4 mm; artery 2.4 mm.
    expect(Math.abs(lengthOf('liver') - (15 + 18 - 4))).toBeLessThanOrEqual(3 * toleranceMm);
    expect(Math.abs(lengthOf('tumour') - 12)).toBeLessThanOrEqual(toleranceMm);
    expect(Math.abs(lengthOf('hepatic-vein') - 4)).toBeLessThanOrEqual(toleranceMm);
    expect(Math.abs(lengthOf('hepatic-artery') - 2.4)).toBeLessThanOrEqual(toleranceMm);
    expect(
      figures.safety.traversed.find((entry) => entry.kind === 'hepatic-artery')?.critical,
    ).toBe(true);
    expect(figures.safety.traversed.find((entry) => entry.kind === 'tumour')?.critical).toBe(false);
    expect(clearanceTo(figures, 'hepatic-artery').minDistanceMm).toBe(0);
  });

  it('counts capsule crossings, bridging a vein inside the liver', () => {
    // In at −30, out at −15, in at −10 (the vein at −5 lies between liver on both sides), out
    // at 20 mm past the tumour: 4 crossings.
    expect(figures.safety.capsuleCrossings).toBe(4);
  });

  it('measures the parenchyma crossed before the tumour', () => {
    // Liver before x = 8: 15 mm + (18 − 4 − 0) mm = 15 + 14 = 29 mm (the vein is not parenchyma).
    const parenchymaMm = figures.safety.parenchymaBeforeTumourMm ?? NaN;
    expect(Math.abs(parenchymaMm - 29)).toBeLessThanOrEqual(3 * toleranceMm);
  });

  it('gives no parenchyma figure to a path that never reaches a tumour', () => {
    expect(
      trajectoryOf(labels, [-40, 0, 0], [0, 0, 0], 20).safety.parenchymaBeforeTumourMm,
    ).toBeNull();
  });

  it('reports the path length and the working length', () => {
    expect(figures.safety.pathLengthMm).toBeCloseTo(80, 12);
    expect(figures.safety.workingLengthMm).toBe(150);
    expect(figures.samplesOutsideSeries).toBe(0);
  });

  it('counts path samples beyond the series', () => {
    // The grid ends at x = −47.6 − 0.4 mm: a path from −60 mm has 12 mm off the grid.
    const outside = trajectoryOf(labels, [-60, 0, 0], [0, 0, 0], 20).samplesOutsideSeries;
    expect(Math.abs(outside * 0.5 - 12)).toBeLessThanOrEqual(1);
  });
});

describe('angulationFromAxialDeg', () => {
  it.each([
    // asin(Δz / length): a 3-4-5 triangle gives asin(0.8) = 53.130°; in-plane 0°; along z 90°.
    { tip: [30, 0, 40] as Vec3, degrees: 53.13010235415598 },
    { tip: [30, 40, 0] as Vec3, degrees: 0 },
    { tip: [0, 0, -25] as Vec3, degrees: 90 },
    { tip: [10, 10, 10 * Math.SQRT2] as Vec3, degrees: 45 },
  ])('is $degrees° for a tip at $tip', ({ tip, degrees }) => {
    expect(angulationFromAxialDeg([0, 0, 0], tip)).toBeCloseTo(degrees, 9);
  });
});
