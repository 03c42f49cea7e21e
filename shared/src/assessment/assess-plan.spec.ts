/**
 * End to end on a synthetic phantom built here: a liver ellipsoid, a spherical tumour, a
 * gallbladder beside the path and a hepatic vein beside the zone, all analytic, so every
 * figure is computed independently below (line–sphere intersections, distances between
 * lines and spheres, ellipsoid margins) and compared within voxel tolerances.
 */
import { describe, expect, it } from 'vitest';
import type { SafetyProfileBody } from '../api/safety-profiles';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import { voxelCount, voxelToLps, type VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, distance, dot, normalize, subtract, type Vec3 } from '../geometry/vector';
import {
  CALIBRATION_MODEL_VERSION,
  DAMAGE_INTERPOLATION_ERROR_MM,
  type AblationZoneInput,
  type ApplicatorCalibration,
} from '../bioheat';
import { assessPlan } from './assess-plan';
import type { AssessmentInput } from './assessment-input';
import { createDistanceFieldCache } from './distance-field-cache';
import { EngineRefusal } from './engine-refusal';
import { GRID_ORIENTATION_ERROR_MM } from './physics-acceptance';
import { verdictRules } from './verdict';

const spacingMm: Vec3 = [0.8, 0.8, 1.25];
const geometry: VolumeGeometry = {
  dimensions: [110, 90, 60],
  spacingMm,
  originLps: [-47.6, -35.6, -37.5],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const h = halfVoxelDiagonalMm(spacingMm);

const LIVER = 1;
const TUMOUR = 2;
const GALLBLADDER = 3;
const VEIN = 4;
const liverSemiAxesMm: Vec3 = [32, 28, 32];
const tumourCentre: Vec3 = [5, 0, 0];
const tumourRadiusMm = 8;
const shaft = normalize([1, 0, -0.3]);
const entry = addScaled(tumourCentre, shaft, -45);
const tip = addScaled(tumourCentre, shaft, 4);
const gallbladderCentre = addScaled(addScaled(entry, shaft, 20), [0, 1, 0], 10);
const gallbladderRadiusMm = 6;
const veinAxisThrough: Vec3 = [5, 22, 0];
const veinRadiusMm = 3;
const zoneSemiAxesMm = { along: 17, across: 16 };

const isInLiver = ([x, y, z]: Vec3) =>
  (x / liverSemiAxesMm[0]) ** 2 + (y / liverSemiAxesMm[1]) ** 2 + (z / liverSemiAxesMm[2]) ** 2 <=
  1;
const isInTumour = (point: Vec3) => distance(point, tumourCentre) <= tumourRadiusMm;

function phantom(): Uint8Array {
  const labels = new Uint8Array(voxelCount(geometry.dimensions));
  const [nx, ny, nz] = geometry.dimensions;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const point = voxelToLps(geometry, [i, j, k]);
        if (isInLiver(point)) labels[index] = LIVER;
        if (distance(point, gallbladderCentre) <= gallbladderRadiusMm) labels[index] = GALLBLADDER;
        if (
          Math.hypot(point[0] - veinAxisThrough[0], point[1] - veinAxisThrough[1]) <= veinRadiusMm
        ) {
          labels[index] = VEIN;
        }
        if (isInTumour(point)) labels[index] = TUMOUR;
      }
    }
  }
  return labels;
}
const labels = phantom();

const safetyProfile: SafetyProfileBody = {
  name: 'Test profile',
  structureRules: [
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: false, source: 'from memory' },
    { kind: 'hepatic-vein', minimumClearanceMm: 5, isCritical: true, source: 'common practice' },
  ],
  marginTargetMm: 5,
  marginTargetSource: 'common practice',
  marginMinimumMm: 0,
  marginMinimumSource: 'Wang X et al. 2013',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['hepatic-vein', 'portal-vein'],
  heatSinkSource: 'Lu DSK et al. 2002',
  maximumAngulationDeg: 45,
  angulationSource: 'common practice',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource: 'common practice',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'common practice',
  physicsToleranceMm: 2,
  physicsToleranceSource: 'common practice',
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource: 'common practice',
};

function input(overrides: Partial<AssessmentInput> = {}): AssessmentInput {
  return {
    geometry,
    labelMap: labels,
    structures: [
      { id: 'liver', labelValue: LIVER, kind: 'liver' },
      { id: 'lesion', labelValue: TUMOUR, kind: 'tumour' },
      { id: 'gallbladder', labelValue: GALLBLADDER, kind: 'gallbladder' },
      { id: 'vein', labelValue: VEIN, kind: 'hepatic-vein' },
      { id: 'unmapped', labelValue: 9, kind: null },
    ],
    applicators: [
      {
        entry,
        target: tip,
        profile: {
          workingLengthMm: 150,
          activeLengthMm: 20,
          // An invented table: at 60 W for 300 s, 34 × 32 mm centred 4 mm behind the tip.
          zoneTable: [
            { powerW: 60, timeS: 300, zoneLengthMm: 34, zoneWidthMm: 32, tipOffsetMm: 4 },
            { powerW: 60, timeS: 600, zoneLengthMm: 44, zoneWidthMm: 38, tipOffsetMm: 6 },
          ],
        },
        powerW: 60,
        timeS: 300,
      },
    ],
    safetyProfile,
    options: { zoneModels: ['table'], cropMarginMm: 20 },
    ...overrides,
  };
}

/** Where the line entry + t·shaft enters a sphere (the smaller root of |p − c|² = r²), mm. */
function entersSphereAtMm(centre: Vec3, radiusMm: number): number {
  const offset = subtract(entry, centre);
  const b = dot(offset, shaft);
  return -b - Math.sqrt(b * b - (dot(offset, offset) - radiusMm ** 2));
}

describe('assessPlan on an analytic phantom', async () => {
  const progress: number[] = [];
  const output = await assessPlan(input(), { onProgress: (step) => progress.push(step.fraction) });
  const { result } = output;
  const [applicator] = result.applicators;

  it('measures the path: length, angulation, working length', () => {
    expect(applicator.pathLengthMm).toBeCloseTo(49, 9);
    expect(applicator.workingLengthMm).toBe(150);
    // asin(0.3 / √1.09) = 16.699°.
    expect(applicator.angulationDeg).toBeCloseTo(
      (Math.asin(0.3 / Math.sqrt(1.09)) * 180) / Math.PI,
      9,
    );
  });

  it('finds the gallbladder clearance by the line–sphere distance', () => {
    // The gallbladder's centre lies 10 mm off the path at 20 mm from the entry, along y: d − r
    // = 4 mm. Measured to the faces of its voxels (engine 1.1.0; it was to their centres,
    // −h … +3h), the reading is within half a voxel along y (0.4 mm) of it, plus the sphere's
    // sag over half a voxel sideways ((0.4² + 0.625²)/2r, under 0.05 mm); the bound (cells a
    // voxel wider) never above it.
    const clearance = applicator.clearances.find((entry) => entry.kind === 'gallbladder');
    const sagMm = (0.4 ** 2 + 0.625 ** 2) / (2 * gallbladderRadiusMm);
    expect(Math.abs((clearance?.minDistanceMm ?? NaN) - 4)).toBeLessThanOrEqual(0.4 + sagMm);
    expect(clearance?.lowerBoundMm).toBeLessThanOrEqual(4);
    // Within 4h of the minimum only while √(10² + (t − 20)²) − 6 ≤ 4 + 4h.
    expect(Math.abs((clearance?.atMm ?? NaN) - 20)).toBeLessThanOrEqual(
      Math.sqrt((10 + 4 * h) ** 2 - 100),
    );
  });

  it('finds the parenchyma before the tumour and one capsule crossing', () => {
    // The liver is an ellipsoid with a = c: in the plane y = 0 the path meets a circle of 32 mm.
    const liverEntryMm = entersSphereAtMm([0, 0, 0], 32);
    const tumourEntryMm = entersSphereAtMm(tumourCentre, tumourRadiusMm);
    expect(tumourEntryMm).toBeCloseTo(37, 9);
    expect(applicator.capsuleCrossings).toBe(1);
    const toleranceMm = 2 * (h + 0.25);
    expect(
      Math.abs((applicator.parenchymaBeforeTumourMm ?? NaN) - (tumourEntryMm - liverEntryMm)),
    ).toBeLessThanOrEqual(toleranceMm);
    // Its bound (each end a voxel off along the path, and the sampling step) never above it.
    expect(applicator.parenchymaBeforeTumourLowerMm).toBeLessThanOrEqual(
      tumourEntryMm - liverEntryMm,
    );
    const tumourLength = applicator.traversed.find((entry) => entry.kind === 'tumour')?.lengthMm;
    expect(Math.abs((tumourLength ?? NaN) - 12)).toBeLessThanOrEqual(h + 0.25);
  });

  it('covers the tumour with the margin of a sphere in an ellipsoid, b − r', () => {
    // Elementary geometry: a concentric sphere in an ellipsoid has margin min(a, b) − r;
    // here 16 − 8 = 8 mm. The table zone is read exactly (engine 1.1.0; it was voxelised,
    // within 2h) and the tumour at the faces of its voxels, each within half a voxel along its
    // axis of the surface: within half the largest spacing (0.625 mm). The bound (the tumour a
    // voxel wider; the table zone has no boundary error) never above it.
    const [zone] = result.zones;
    expect(zone.model).toBe('table');
    expect(zone.boundaryErrorMm).toBe(0);
    const [tumour] = zone.tumours;
    expect(tumour.structureId).toBe('lesion');
    expect(tumour.coveredPercent).toBe(100);
    const marginMm = zoneSemiAxesMm.across - tumourRadiusMm;
    expect(Math.abs(tumour.minimalMarginMm - marginMm)).toBeLessThanOrEqual(spacingMm[2] / 2);
    expect(tumour.minimalMarginLowerMm).toBeLessThanOrEqual(marginMm);
    expect(tumour.surfaceBelowTargetPercent).toBe(0);
    // The zone: 4/3·π·a·b², counting error well under 2 % at 10 voxels of radius or more.
    const zoneMl = ((4 / 3) * Math.PI * zoneSemiAxesMm.along * zoneSemiAxesMm.across ** 2) / 1000;
    expect(Math.abs(zone.volumeMl - zoneMl)).toBeLessThan(0.02 * zoneMl);
    expect(zone.collateral).toEqual([]);
  });

  it('gives the tumour the volume of its voxels, close to 4/3·π·r³', () => {
    const voxels = labels.reduce((count, value) => count + (value === TUMOUR ? 1 : 0), 0);
    const voxelMl = (spacingMm[0] * spacingMm[1] * spacingMm[2]) / 1000;
    expect(result.zones[0].tumours[0].volumeMl).toBeCloseTo(voxels * voxelMl, 9);
    const sphereMl = ((4 / 3) * Math.PI * tumourRadiusMm ** 3) / 1000;
    expect(Math.abs(voxels * voxelMl - sphereMl)).toBeLessThan(0.03 * sphereMl);
  });

  it('returns the margin of every tumour surface voxel for drawing', () => {
    const [nx, ny] = geometry.dimensions;
    let surface = 0;
    labels.forEach((value, index) => {
      if (value !== TUMOUR) return;
      const neighbours = [
        index - 1,
        index + 1,
        index - nx,
        index + nx,
        index - nx * ny,
        index + nx * ny,
      ];
      if (neighbours.some((other) => labels[other] !== TUMOUR)) surface++;
    });
    const [samples] = output.marginSamples;
    expect(samples.structureId).toBe('lesion');
    expect(samples.marginMm).toHaveLength(surface);
    expect(samples.lps).toHaveLength(3 * surface);
    for (let index = 0; index < surface; index++) {
      const point: Vec3 = [
        samples.lps[3 * index],
        samples.lps[3 * index + 1],
        samples.lps[3 * index + 2],
      ];
      expect(distance(point, tumourCentre)).toBeLessThanOrEqual(tumourRadiusMm + 1e-3);
    }
  });

  it('finds the hepatic vein as a heat sink, with its diameter and its gap to the zone', () => {
    // The vein's wall is 22 − 3 = 19 mm from the centre across the shaft, the zone's surface
    // 16 mm: a 3 mm gap; diameter 6 mm. The diameter within 2h (heat-sinks.spec.ts), its band
    // holding 6 mm; the gap read from the faces of the vein's voxels to the exact zone (engine
    // 1.1.0; it was voxelised, within 2h), within half a voxel along y, its bound under it.
    expect(result.heatSinks).toHaveLength(1);
    const [vein] = result.heatSinks;
    expect(vein.kind).toBe('hepatic-vein');
    expect(Math.abs(vein.diameterMm - 2 * veinRadiusMm)).toBeLessThanOrEqual(2 * h);
    expect(vein.diameterLowerMm).toBeLessThanOrEqual(2 * veinRadiusMm);
    expect(vein.diameterUpperMm).toBeGreaterThanOrEqual(2 * veinRadiusMm);
    const gapMm = 22 - veinRadiusMm - zoneSemiAxesMm.across;
    expect(Math.abs(vein.distanceMm - gapMm)).toBeLessThanOrEqual(spacingMm[1] / 2);
    expect(vein.distanceLowerMm).toBeLessThanOrEqual(gapMm);
    expect(vein.isPossible).toBe(false);
  });

  it('gives the verdict the two cautions the figures call for', () => {
    expect(result.primaryZoneModel).toBe('table');
    expect(result.verdict.level).toBe('acceptable-with-cautions');
    expect(result.verdict.reasons.map((reason) => [reason.rule, reason.kind])).toEqual([
      [verdictRules.clearance, 'gallbladder'],
      [verdictRules.heatSink, 'hepatic-vein'],
    ]);
    expect(output.caution).toContain('treating team');
  });

  it('reports progress up to 1 and the time of each stage', () => {
    expect(progress.at(-1)).toBeCloseTo(1, 9);
    expect([...progress].sort((a, b) => a - b)).toEqual(progress);
    expect(Object.keys(output.timingsMs)).toEqual(
      expect.arrayContaining(['distance-fields', 'coverage', 'verdict']),
    );
    expect(result.engineVersion).toMatch(/^\d+\.\d+\.\d+$/);
  });

  it('returns the zone for drawing on a tight box of the series grid', () => {
    const [display] = output.zones;
    const voxels = display.mask.reduce((count, value) => count + value, 0);
    const voxelMl = (spacingMm[0] * spacingMm[1] * spacingMm[2]) / 1000;
    expect(voxels * voxelMl).toBeCloseTo(result.zones[0].volumeMl, 9);
    expect(display.geometry.spacingMm).toEqual(spacingMm);
    expect(display.mask).toHaveLength(display.geometry.dimensions.reduce((a, b) => a * b, 1));
  });

  it('answers the same from cached distance fields', async () => {
    const cache = createDistanceFieldCache();
    const first = await assessPlan(input({ seriesKey: 'phantom' }), { cache });
    const second = await assessPlan(input({ seriesKey: 'phantom' }), { cache });
    expect(second.result).toEqual(first.result);
    expect(first.result).toEqual(result);
  });
});

/**
 * A calibration as the server stores one (plain data), with the leave-one-out error given: the
 * engine reads its parameters and judges its figures, whatever table they came from.
 */
function storedCalibration(leaveOneOutMaxMm: number): ApplicatorCalibration {
  return {
    modelVersion: CALIBRATION_MODEL_VERSION,
    parameters: {
      couplingEfficiency: 0.6,
      powerExponent: 0.5,
      referencePowerW: 60,
      heatingLengthMm: 12,
      segmentOffsetMm: 1,
    },
    rows: [],
    rmsResidualMm: leaveOneOutMaxMm / 3,
    maxResidualMm: leaveOneOutMaxMm / 2,
    leaveOneOutRmsMm: leaveOneOutMaxMm / 2,
    leaveOneOutMaxMm,
    leaveOneOutBoundaryMm: leaveOneOutMaxMm,
    isAtRangeLimit: false,
    isImplausible: false,
    simulations: 0,
    caution: '',
  };
}

/**
 * A stand-in for the physics: Ω = exp(13 mm − r) about the tumour centre on the grid it is
 * given (the 2 mm calibration grid), so the zone Ω ≥ 1 is the sphere of 13 mm and ln Ω is
 * linear in r, which the read-back interpolates nearly exactly. Margin 13 − 8 = 5 mm.
 */
function sphereModel(seen: { request?: AblationZoneInput }) {
  return (request: AblationZoneInput) => {
    seen.request = request;
    const [nx, ny] = request.geometry.dimensions;
    const omega = new Float32Array(voxelCount(request.geometry.dimensions));
    omega.forEach((_, index) => {
      const voxel: Vec3 = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
      omega[index] = Math.exp(13 - distance(voxelToLps(request.geometry, voxel), tumourCentre));
    });
    return {
      geometry: request.geometry,
      damageMask: Uint8Array.from(omega, (value) => (value >= 1 ? 1 : 0)),
      volumeMl: 0,
      omega,
      cem43: new Float32Array(0),
      peakTemperatureC: new Float32Array(0),
      stepCount: 0,
      timeStepS: 0,
      caution: '',
    };
  };
}

const withPhysics = (leaveOneOutMaxMm: number) =>
  input({
    options: { zoneModels: ['table', 'bioheat'], cropMarginMm: 20 },
    applicators: input().applicators.map((applicator) => ({
      ...applicator,
      calibration: storedCalibration(leaveOneOutMaxMm),
    })),
  });

describe('assessPlan with the bioheat zone', () => {
  it('takes its coverage from the bioheat zone when its calibration passed', async () => {
    const seen: { request?: AblationZoneInput } = {};
    const output = await assessPlan(withPhysics(1.2), { bioheat: sphereModel(seen) });
    const request = seen.request;
    // The heating as calibrated: η·(P/P_ref)^γ at 60 W, the fitted segment.
    expect(request?.applicators[0].calibration).toBeCloseTo(0.6, 12);
    expect(request?.applicators[0].activeLengthMm).toBe(12);
    expect(request?.applicators[0].segmentOffsetMm).toBe(1);
    expect(request?.geometry.spacingMm.every((spacing) => spacing === 2)).toBe(true);
    expect(request?.heatSinkMask?.some((value) => value !== 0)).toBe(true);
    expect(output.result.primaryZoneModel).toBe('bioheat');
    expect(output.result.zones.map((zone) => zone.model)).toEqual(['table', 'bioheat']);
    const zone = output.result.zones[1];
    expect(zone.isAdvisory).toBeUndefined();
    // Concentric spheres: within 2h on the crop and the interpolated read-back's error.
    const bioheat = zone.tumours[0];
    expect(Math.abs(bioheat.minimalMarginMm - 5)).toBeLessThanOrEqual(
      2 * h + DAMAGE_INTERPOLATION_ERROR_MM,
    );
    expect(zone.boundaryErrorMm).toBeGreaterThanOrEqual(
      Math.hypot(1.2, DAMAGE_INTERPOLATION_ERROR_MM, GRID_ORIENTATION_ERROR_MM) - 1e-9,
    );
    expect(output.marginSamples.map((samples) => samples.model)).toEqual(['table', 'bioheat']);
  });

  it('keeps the table zone for the verdict when the leave-one-out error is beyond tolerance', async () => {
    const output = await assessPlan(withPhysics(3.4), { bioheat: sphereModel({}) });
    expect(output.result.primaryZoneModel).toBe('table');
    const [table, physics] = output.result.zones;
    expect(table.isAdvisory).toBeUndefined();
    expect(physics.isAdvisory).toBe(true);
    expect(physics.advisoryReason).toBe(
      'The heating model predicts this profile’s own zone table to within 3.4 mm ' +
        '(leave-one-out), beyond the 2 mm tolerance; shown for information only.',
    );
    // The physics zone is still measured and shown.
    expect(physics.tumours[0].coveredPercent).toBeGreaterThan(99);
  });

  it('refuses to run the physics without a calibration', async () => {
    await expect(
      assessPlan(input({ options: { zoneModels: ['table', 'bioheat'], cropMarginMm: 20 } })),
    ).rejects.toMatchObject({ name: 'EngineRefusal', field: 'applicators[0].calibration' });
  });
});

describe('assessPlan refusals', () => {
  it('refuses a power outside the zone table, naming the applicator and the range', async () => {
    const applicators = input().applicators.map((applicator) => ({ ...applicator, powerW: 90 }));
    const refusal = await assessPlan(input({ applicators })).catch((error: unknown) => error);
    expect(refusal).toBeInstanceOf(EngineRefusal);
    expect(refusal).toMatchObject({ field: 'applicators[0].powerW' });
    expect((refusal as Error).message).toContain('Applicator 1: 90 W lies outside');
  });

  it('refuses a label map that does not fit the grid', async () => {
    await expect(assessPlan(input({ labelMap: new Uint8Array(10) }))).rejects.toMatchObject({
      name: 'EngineRefusal',
      field: 'labelMap',
    });
  });

  it('refuses a plan wholly outside the series', async () => {
    const applicators = input().applicators.map((applicator) => ({
      ...applicator,
      entry: [500, 500, 500] as Vec3,
      target: [520, 500, 500] as Vec3,
    }));
    await expect(assessPlan(input({ applicators }))).rejects.toMatchObject({
      problem: 'plan-outside-series',
    });
  });

  it('refuses a safety profile the schema refuses, naming the field', async () => {
    await expect(
      assessPlan(input({ safetyProfile: { ...safetyProfile, marginTargetMm: -3 } })),
    ).rejects.toMatchObject({ field: 'safetyProfile.marginTargetMm' });
  });
});
