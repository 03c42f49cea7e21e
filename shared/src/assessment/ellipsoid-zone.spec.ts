import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { distance, normalize, type Vec3 } from '../geometry/vector';
import {
  ellipsoidBoundsLps,
  ellipsoidContains,
  ellipsoidVolumeMl,
  isEllipsoidInsideGrid,
  rasteriseEllipsoids,
  tableZoneEllipsoid,
} from './ellipsoid-zone';

/**
 * Volume tolerance of a shape rasterised by voxel centres: 1 % of its volume. Counting lattice
 * points in a smooth convex body of radius R voxels errs by far less than its surface in
 * voxels (the lattice-point problem: o(R²), from memory); here R ≈ 16–20 voxels and the counts
 * land within 0.1 %. The rigorous bound, the volume of the shell within half a voxel diagonal
 * of the surface, is ~10 % here: too loose to tell a union from a sum.
 */
const RELATIVE_TOLERANCE = 0.01;

function grid(
  dimensions: [number, number, number],
  spacingMm: Vec3,
  originLps: Vec3,
): VolumeGeometry {
  return {
    dimensions,
    spacingMm,
    originLps,
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };
}

function countMm3(mask: Uint8Array, geometry: VolumeGeometry): number {
  const [wi, wj, wk] = geometry.spacingMm;
  return mask.reduce((sum, value) => sum + value, 0) * wi * wj * wk;
}

/** A sphere of radius r as a table zone: length = width = 2r, centred on the tip. */
function sphereZone(centreLps: Vec3, radiusMm: number, direction: Vec3) {
  const entry: Vec3 = [
    centreLps[0] - 50 * direction[0],
    centreLps[1] - 50 * direction[1],
    centreLps[2] - 50 * direction[2],
  ];
  return tableZoneEllipsoid(entry, centreLps, {
    zoneLengthMm: 2 * radiusMm,
    zoneWidthMm: 2 * radiusMm,
    tipOffsetMm: 0,
  });
}

describe('tableZoneEllipsoid', () => {
  it('centres the zone tipOffsetMm behind the tip, its long axis along the shaft', () => {
    // applicator-profiles.ts: the centre lies tipOffsetMm behind the tip, towards the entry.
    const zone = tableZoneEllipsoid([0, 0, 0], [30, 40, 0], {
      zoneLengthMm: 40,
      zoneWidthMm: 30,
      tipOffsetMm: 10,
    });
    expect(zone.axisLps[0]).toBeCloseTo(0.6, 12);
    expect(zone.axisLps[1]).toBeCloseTo(0.8, 12);
    expect(distance(zone.centreLps, [24, 32, 0])).toBeLessThan(1e-12);
    expect([zone.semiAxisAlongMm, zone.semiAxisAcrossMm]).toEqual([20, 15]);
    // The ends of the long axis are on the surface, a point just beyond is not.
    expect(ellipsoidContains(zone, [36, 48, 0])).toBe(true);
    expect(ellipsoidContains(zone, [36.06, 48.08, 0])).toBe(false);
  });
});

describe('rasteriseEllipsoids', () => {
  const geometry = grid([90, 70, 60], [0.5, 0.5, 0.6], [-20.13, -15.07, -17.91]);

  it('gives an oblique ellipsoid the volume 4/3·π·a·b²', () => {
    // Ellipsoid volume 4/3·π·abc (elementary geometry).
    const zone = tableZoneEllipsoid([-30, -25, -20], [3, 2, 1.5], {
      zoneLengthMm: 34,
      zoneWidthMm: 22,
      tipOffsetMm: 4,
    });
    const expectedMm3 = (4 / 3) * Math.PI * 17 * 11 * 11;
    expect(ellipsoidVolumeMl(zone) * 1000).toBeCloseTo(expectedMm3, 9);
    expect(isEllipsoidInsideGrid(zone, geometry)).toBe(true);
    const counted = countMm3(rasteriseEllipsoids([zone], geometry), geometry);
    expect(Math.abs(counted - expectedMm3)).toBeLessThan(RELATIVE_TOLERANCE * expectedMm3);
  });

  it('gives the union of two overlapping spheres their volumes less the lens between them', () => {
    // Sphere–sphere intersection (lens) volume, any geometry handbook:
    // V = π(R + r − d)²(d² + 2dr − 3r² + 2dR + 6rR − 3R²) / (12d).
    const [bigMm, smallMm] = [10, 8];
    const bigCentre: Vec3 = [-1.7, 0.4, 0.3];
    const axis = normalize([2, 1, 1]);
    const d = 12;
    const smallCentre: Vec3 = [
      bigCentre[0] + d * axis[0],
      bigCentre[1] + d * axis[1],
      bigCentre[2] + d * axis[2],
    ];
    const [R, r] = [bigMm, smallMm];
    const lensMm3 =
      (Math.PI *
        (R + r - d) ** 2 *
        (d * d + 2 * d * r - 3 * r * r + 2 * d * R + 6 * r * R - 3 * R * R)) /
      (12 * d);
    expect(lensMm3).toBeCloseTo(141 * Math.PI, 9); // by hand: π·36·564/144
    const unionMm3 = (4 / 3) * Math.PI * (R ** 3 + r ** 3) - lensMm3;
    const zones = [sphereZone(bigCentre, R, [1, 0, 0]), sphereZone(smallCentre, r, [0, 1, 0])];
    const counted = countMm3(rasteriseEllipsoids(zones, geometry), geometry);
    expect(Math.abs(counted - unionMm3)).toBeLessThan(RELATIVE_TOLERANCE * unionMm3);
    // The lens is 7 % of the union: a sum of the two spheres would fail the check above.
    expect(lensMm3 / unionMm3).toBeGreaterThan(5 * RELATIVE_TOLERANCE);
  });

  it('bounds an oblique ellipsoid by its analytic axis-aligned box', () => {
    const zone = tableZoneEllipsoid([0, 0, 0], [10, 10, 10], {
      zoneLengthMm: 30,
      zoneWidthMm: 16,
      tipOffsetMm: 0,
    });
    const { minLps, maxLps } = ellipsoidBoundsLps(zone);
    // Half extent along x: √(a²/3 + b²·2/3) for u = (1, 1, 1)/√3, a = 15, b = 8.
    const half = Math.sqrt(225 / 3 + (64 * 2) / 3);
    expect(maxLps[0] - 10).toBeCloseTo(half, 12);
    expect(10 - minLps[2]).toBeCloseTo(half, 12);
  });

  it('reports a zone reaching beyond the grid', () => {
    const zone = sphereZone([-18, 0, 0], 5, [1, 0, 0]);
    expect(isEllipsoidInsideGrid(zone, geometry)).toBe(false);
  });
});
