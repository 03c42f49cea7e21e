import { describe, expect, it } from 'vitest';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import { voxelCount, type VolumeGeometry } from '../geometry/patient-geometry';
import { addScaled, distance, normalize, type Vec3 } from '../geometry/vector';
import { assessCoverage, type CoverageInput } from './coverage';
import { rasteriseEllipsoids, tableZoneEllipsoid, type EllipsoidZone } from './ellipsoid-zone';
import { kindCode } from './label-inventory';
import { maskExtent, zoneSignedField } from './zone-field';
import { ellipsoidZoneSurface, maskZoneSurface } from './zone-surface';

const TUMOUR = 2;
const GALLBLADDER = 8;
const spacingMm: Vec3 = [0.5, 0.5, 0.6];
const geometry: VolumeGeometry = {
  dimensions: [96, 96, 80],
  spacingMm,
  originLps: [-23.61, -24.17, -23.83],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const centre: Vec3 = [0.13, -0.21, 0.07];
/**
 * Tolerance of a margin between two voxelised surfaces: each lies within half a voxel
 * diagonal h of its analytic surface (every point of a cell is within h of its centre), so a
 * gap between them is within 2h of the analytic gap (derived here, triangle inequality).
 */
const marginToleranceMm = 2 * halfVoxelDiagonalMm(spacingMm);

/** Labels every voxel whose centre lies inside (the grid is axis-aligned: no turn needed). */
function paint(isInside: (pointLps: Vec3) => boolean, into: Uint8Array, value: number): void {
  const [nx, ny, nz] = geometry.dimensions;
  const [ox, oy, oz] = geometry.originLps;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const point: Vec3 = [ox + i * spacingMm[0], oy + j * spacingMm[1], oz + k * spacingMm[2]];
        if (isInside(point)) into[index] = value;
      }
    }
  }
}

function coverageOf(
  labels: Uint8Array,
  zones: EllipsoidZone[],
  marginTargetMm: number,
  readsMask = false,
) {
  const zoneMask = rasteriseEllipsoids(zones, geometry);
  const kindCodes = Uint8Array.from(labels, (label) =>
    label === TUMOUR ? kindCode('tumour') : label === GALLBLADDER ? kindCode('gallbladder') : 0,
  );
  const tumourMask = Uint8Array.from(labels, (label) => (label === TUMOUR ? 1 : 0));
  const tumourExtent = maskExtent(tumourMask, geometry.dimensions);
  const zoneExtent = maskExtent(zoneMask, geometry.dimensions);
  if (!tumourExtent || !zoneExtent) throw new Error('empty phantom');
  const input: CoverageInput = {
    model: 'table',
    cropGeometry: geometry,
    cropLabels: labels,
    kindCodes,
    zoneMask,
    // The table zone is read from its spheroids; a mask zone (the physics zone's kind) from
    // its voxelised surface, whose reading error is its boundary error.
    zoneSurface: readsMask
      ? maskZoneSurface(zoneSignedField(zoneMask, geometry, [zoneExtent, tumourExtent], 2))
      : ellipsoidZoneSurface(zones, geometry),
    boundaryErrorMm: readsMask ? halfVoxelDiagonalMm(spacingMm) : 0,
    tumours: [{ structureId: 'lesion', labelValue: TUMOUR, extent: tumourExtent }],
    marginTargetMm,
  };
  return assessCoverage(input);
}

function sphereLabels(centreLps: Vec3, radiusMm: number): Uint8Array {
  const labels = new Uint8Array(voxelCount(geometry.dimensions));
  paint((point) => distance(point, centreLps) <= radiusMm, labels, TUMOUR);
  return labels;
}

describe('assessCoverage', () => {
  // A sphere of radius r concentric with an ellipsoid of semi-axes a ≥ b: the margin is b − r
  // (elementary geometry [C]: r = 10 mm in R = 15 mm → 5 mm), here on an oblique shaft.
  const shaft = normalize([1, 2, 2]);
  const concentricZone = tableZoneEllipsoid(
    addScaled(centre, shaft, -60),
    addScaled(centre, shaft, 6),
    {
      zoneLengthMm: 40,
      zoneWidthMm: 30,
      tipOffsetMm: 6,
    },
  );

  it('gives a concentric spherical tumour in an ellipsoidal zone the margin b − r', () => {
    const { zone } = coverageOf(sphereLabels(centre, 10), [concentricZone], 5);
    const [tumour] = zone.tumours;
    expect(tumour.coveredPercent).toBe(100);
    expect(Math.abs(tumour.minimalMarginMm - 5)).toBeLessThanOrEqual(marginToleranceMm);
  });

  it('reads the same margin from the voxelised zone, within its boundary error', () => {
    // Read as a physics zone is read: from the zone's voxels. Their surface lies within h of
    // the ellipsoid (zone-field.ts) and the tumour's faces within half a spacing of the sphere,
    // so the margin is within h + 0.3 mm of b − r; its bound takes off the boundary error h
    // and never exceeds b − r.
    const { zone } = coverageOf(sphereLabels(centre, 10), [concentricZone], 5, true);
    const [tumour] = zone.tumours;
    const h = halfVoxelDiagonalMm(spacingMm);
    expect(zone.boundaryErrorMm).toBeCloseTo(h, 12);
    expect(Math.abs(tumour.minimalMarginMm - 5)).toBeLessThanOrEqual(h + spacingMm[2] / 2);
    expect(tumour.minimalMarginLowerMm).toBeLessThanOrEqual(5);
  });

  it('reads R − r at every surface voxel of a tumour concentric with a spherical zone', () => {
    // Concentric r = 10 mm in R = 15 mm: 5 mm all round (elementary geometry), so the
    // whole surface is under a 6 mm target and none of it under a 4 mm one.
    const sphere = tableZoneEllipsoid(addScaled(centre, shaft, -60), centre, {
      zoneLengthMm: 30,
      zoneWidthMm: 30,
      tipOffsetMm: 0,
    });
    const above = coverageOf(sphereLabels(centre, 10), [sphere], 5 - marginToleranceMm);
    expect(above.zone.tumours[0].surfaceBelowTargetPercent).toBe(0);
    const below = coverageOf(sphereLabels(centre, 10), [sphere], 5 + marginToleranceMm);
    expect(below.zone.tumours[0].surfaceBelowTargetPercent).toBe(100);
    for (const marginMm of above.marginSamples[0].marginMm) {
      expect(Math.abs(marginMm - 5)).toBeLessThanOrEqual(marginToleranceMm);
    }
  });

  it('gives the tumour its sphere volume 4/3·π·r³', () => {
    const { zone } = coverageOf(sphereLabels(centre, 10), [concentricZone], 5);
    // 4/3·π·r³ = 4.18879 mL at r = 10 mm; counting error ~0.1 % (see ellipsoid-zone.spec.ts).
    expect(zone.tumours[0].volumeMl).toBeCloseTo((4 / 3) * Math.PI, 2);
    expect(zone.volumeMl).toBeCloseTo(((4 / 3) * Math.PI * 20 * 15 * 15) / 1000, 1);
  });

  it('covers an offset tumour by the lens volume and gives it the negative margin R − d − r', () => {
    // Tumour r = 10 mm, zone sphere R = 12 mm with centres d = 8 mm apart: the covered part is
    // the sphere–sphere lens (any geometry handbook), the farthest tumour point lies
    // d + r − R = 6 mm outside the zone.
    const [r, R, d] = [10, 12, 8];
    const zoneCentre = addScaled(centre, shaft, d);
    const zone = tableZoneEllipsoid(addScaled(zoneCentre, shaft, -50), zoneCentre, {
      zoneLengthMm: 2 * R,
      zoneWidthMm: 2 * R,
      tipOffsetMm: 0,
    });
    const lensMm3 =
      (Math.PI *
        (R + r - d) ** 2 *
        (d * d + 2 * d * r - 3 * r * r + 2 * d * R + 6 * r * R - 3 * R * R)) /
      (12 * d);
    const expectedPercent = (100 * lensMm3) / ((4 / 3) * Math.PI * r ** 3);
    const { zone: figures, marginSamples } = coverageOf(sphereLabels(centre, r), [zone], 5);
    const [tumour] = figures.tumours;
    expect(Math.abs(tumour.coveredPercent - expectedPercent)).toBeLessThan(1);
    expect(Math.abs(tumour.minimalMarginMm - (R - d - r))).toBeLessThanOrEqual(marginToleranceMm);
    // The margins drawn on the surface run from −6 mm (far side) to R − (r − d) = 10 mm.
    const margins = [...marginSamples[0].marginMm];
    expect(Math.min(...margins)).toBeCloseTo(tumour.minimalMarginMm, 5);
    expect(Math.abs(Math.max(...margins) - (R - (r - d)))).toBeLessThanOrEqual(marginToleranceMm);
    expect(marginSamples[0].lps.length).toBe(3 * margins.length);
  });

  it('counts at-risk kinds inside the zone as collateral, and not the tumour', () => {
    const labels = sphereLabels(centre, 6);
    // A gallbladder block 4 mm thick across the zone's edge: its part inside the zone.
    const zone = tableZoneEllipsoid(addScaled(centre, [1, 0, 0], -50), centre, {
      zoneLengthMm: 24,
      zoneWidthMm: 24,
      tipOffsetMm: 0,
    });
    paint((point) => point[0] - centre[0] >= 8 && point[0] - centre[0] < 12, labels, GALLBLADDER);
    const { zone: figures } = coverageOf(labels, [zone], 5);
    expect(figures.collateral.map((entry) => entry.kind)).toEqual(['gallbladder']);
    // Spherical cap of height h = 12 − 8 = 4 mm on R = 12: π·h²·(3R − h)/3 (Archimedes).
    const capMm3 = (Math.PI * 16 * (36 - 4)) / 3;
    expect(Math.abs(figures.collateral[0].volumeMl * 1000 - capMm3)).toBeLessThan(0.05 * capMm3);
  });
});
