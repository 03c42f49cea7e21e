import { describe, expect, it } from 'vitest';
import { euclideanDistanceTransform } from '../geometry/distance-transform';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import { voxelCount, type VolumeGeometry } from '../geometry/patient-geometry';
import { dot, normalize, subtract, type Vec3 } from '../geometry/vector';
import { tableZoneEllipsoid } from './ellipsoid-zone';
import { findHeatSinks } from './heat-sinks';
import { kindCode } from './label-inventory';
import { vesselCalibre } from './vessel-calibre';
import { ellipsoidZoneSurface } from './zone-surface';

const spacingMm: Vec3 = [0.8, 0.8, 2];
const geometry: VolumeGeometry = {
  dimensions: [110, 90, 36],
  spacingMm,
  originLps: [-43.7, -35.9, -35.3],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const h = halfVoxelDiagonalMm(spacingMm);
const VEIN = kindCode('hepatic-vein');
const PORTAL = kindCode('portal-vein');

/** Distance from a point to the line through `through` along the unit `axis`, mm. */
function distanceToLine(point: Vec3, through: Vec3, axis: Vec3): number {
  const offset = subtract(point, through);
  const along = dot(offset, axis);
  return Math.sqrt(Math.max(0, dot(offset, offset) - along * along));
}

/** Kind codes of tubes (radius, axis through a point), painted by voxel centres. */
function tubes(list: { code: number; radiusMm: number; through: Vec3; axis: Vec3 }[]): Uint8Array {
  const codes = new Uint8Array(voxelCount(geometry.dimensions));
  const [nx, ny, nz] = geometry.dimensions;
  const [ox, oy, oz] = geometry.originLps;
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const point: Vec3 = [ox + i * spacingMm[0], oy + j * spacingMm[1], oz + k * spacingMm[2]];
        for (const tube of list) {
          if (distanceToLine(point, tube.through, tube.axis) <= tube.radiusMm)
            codes[index] = tube.code;
        }
      }
    }
  }
  return codes;
}

function calibreOf(codes: Uint8Array, code: number) {
  const mask = Uint8Array.from(codes, (value) => (value === code ? 1 : 0));
  const outside = Uint8Array.from(mask, (value) => 1 - value);
  const inside = euclideanDistanceTransform(outside, geometry.dimensions, spacingMm);
  return vesselCalibre(mask, inside, geometry.dimensions, spacingMm);
}

function diametersOf(codes: Uint8Array, code: number): Float32Array {
  return calibreOf(codes, code).diametersMm;
}

describe('vesselDiameters', () => {
  it.each([{ radiusMm: 1.5 }, { radiusMm: 2.5 }, { radiusMm: 4 }])(
    'reads 2R along an oblique tube of radius $radiusMm mm, within a voxel diagonal',
    ({ radiusMm }) => {
      // A cylinder of radius R has diameter 2R everywhere (analytic); the reading is within
      // 2h (a voxel diagonal) of it, as vessel-calibre.ts derives.
      const axis = normalize([0.3, 0.2, 1]);
      const codes = tubes([{ code: VEIN, radiusMm, through: [0.17, -0.29, 0], axis }]);
      const diameters = diametersOf(codes, VEIN);
      const values = [...diameters].filter((value) => !Number.isNaN(value));
      const median = values.sort((a, b) => a - b)[Math.floor(values.length / 2)];
      expect(Math.abs(median - 2 * radiusMm)).toBeLessThanOrEqual(2 * h);
      // Every voxel of the tube, wall or centre, reads the diameter of its cross-section.
      expect(values[Math.floor(values.length * 0.05)]).toBeGreaterThanOrEqual(2 * radiusMm - 2 * h);
      expect(values[Math.floor(values.length * 0.95)]).toBeLessThanOrEqual(2 * radiusMm + 2 * h);
    },
  );

  it('keeps a thin branch its own calibre where it leaves a wide trunk', () => {
    // A trunk of radius 4 mm along z and a branch of radius 1 mm leaving it along x: past the
    // trunk's wall (x > 4 mm + a branch radius) the branch reads 2 mm, not the trunk's 8 mm.
    const codes = tubes([
      { code: VEIN, radiusMm: 4, through: [-20, 0, 0], axis: [0, 0, 1] },
      { code: VEIN, radiusMm: 1, through: [0, 0.13, 0.4], axis: [1, 0, 0] },
    ]);
    const diameters = diametersOf(codes, VEIN);
    const [nx, ny] = geometry.dimensions;
    const [ox, oy, oz] = geometry.originLps;
    const branch: number[] = [];
    const trunk: number[] = [];
    diameters.forEach((value, index) => {
      if (Number.isNaN(value)) return;
      const x = ox + (index % nx) * spacingMm[0];
      const y = oy + (Math.floor(index / nx) % ny) * spacingMm[1];
      const z = oz + Math.floor(index / (nx * ny)) * spacingMm[2];
      if (x > -20 + 4 + 2 && Math.hypot(y - 0.13, z - 0.4) <= 1) branch.push(value);
      if (Math.hypot(x + 20, y) <= 3) trunk.push(value);
    });
    expect(branch.length).toBeGreaterThan(20);
    expect(Math.max(...branch)).toBeLessThanOrEqual(2 + 2 * h);
    expect(Math.min(...trunk)).toBeGreaterThanOrEqual(8 - 2 * h);
  });
});

describe('findHeatSinks', () => {
  // A spherical zone of radius 12 mm at the origin; a 5 mm hepatic vein along z whose axis lies
  // s = 18 mm from the centre; a 1.6 mm portal branch at 14 mm. Gap from a vessel's wall to
  // the zone's surface: s − R_vessel − R_zone (analytic).
  const zoneRadiusMm = 12;
  const zone = tableZoneEllipsoid([-50, 0, 0], [0, 0, 0], {
    zoneLengthMm: 2 * zoneRadiusMm,
    zoneWidthMm: 2 * zoneRadiusMm,
    tipOffsetMm: 0,
  });
  const codes = tubes([
    { code: VEIN, radiusMm: 2.5, through: [18, 0, 0], axis: [0, 0, 1] },
    { code: PORTAL, radiusMm: 0.8, through: [0, 14, 0], axis: [0, 0.6, 0.8] },
  ]);
  const zoneSurface = ellipsoidZoneSurface([zone], geometry);
  const run = (heatSinkDistanceMm: number) =>
    findHeatSinks({
      cropGeometry: geometry,
      kindCodes: codes,
      zoneSurface,
      boundaryErrorMm: 0,
      vessels: [
        { kind: 'hepatic-vein', calibre: calibreOf(codes, VEIN) },
        { kind: 'portal-vein', calibre: calibreOf(codes, PORTAL) },
      ],
      heatSinkDiameterMm: 3,
      heatSinkDistanceMm,
    });

  it('reports a vessel at least 3 mm wide within the distance, with its gap to the zone', () => {
    // Lu DSK et al., AJR 2002;178:47: heat sink at vessels of 3 mm and more.
    const found = run(10);
    expect(found).toHaveLength(1);
    const [vein] = found;
    expect(vein.kind).toBe('hepatic-vein');
    expect(Math.abs(vein.diameterMm - 5)).toBeLessThanOrEqual(2 * h);
    // Its calibre band holds the true 5 mm.
    expect(vein.diameterLowerMm).toBeLessThanOrEqual(5);
    expect(vein.diameterUpperMm).toBeGreaterThanOrEqual(5);
    // The zone is read analytically and the vein's wall at the faces of its voxels, which lie
    // within half a voxel of the true wall along the approach (here x, 0.8 mm); the bound
    // (the wall a voxel nearer) never exceeds the true gap.
    const gapMm = 18 - 2.5 - zoneRadiusMm;
    expect(Math.abs(vein.distanceMm - gapMm)).toBeLessThanOrEqual(spacingMm[0] / 2);
    expect(vein.distanceLowerMm).toBeLessThanOrEqual(gapMm);
    expect(vein.isPossible).toBe(false);
  });

  it('leaves out a wide vessel farther than the distance', () => {
    // The gap is 3.5 mm: a 2 mm heat-sink distance leaves the vein out.
    expect(run(2)).toEqual([]);
  });

  it('leaves out a vessel narrower than the diameter, however close', () => {
    // The 1.6 mm portal branch runs into the zone itself.
    expect(run(10).some((vessel) => vessel.kind === 'portal-vein')).toBe(false);
  });

  it('gives a vessel running through the zone a distance of 0', () => {
    const through = tubes([{ code: VEIN, radiusMm: 2.5, through: [5, 0, 0], axis: [0, 0, 1] }]);
    const found = findHeatSinks({
      cropGeometry: geometry,
      kindCodes: through,
      zoneSurface,
      boundaryErrorMm: 0,
      vessels: [{ kind: 'hepatic-vein', calibre: calibreOf(through, VEIN) }],
      heatSinkDiameterMm: 3,
      heatSinkDistanceMm: 10,
    });
    expect(found).toHaveLength(1);
    expect(found[0].distanceMm).toBe(0);
  });
  it('measures the gap to the nearer of two zones (a plan of two applicators)', () => {
    // A second spherical zone of 8 mm about (−25, 0, 0); a 5 mm vein along z at x = −25,
    // y = 8 + 3 + 2.5 mm: its wall lies 3 mm from the second zone (distance from a point to a
    // sphere), 13.9 mm from the first; approached along y (0.8 mm): within half a voxel.
    const second = tableZoneEllipsoid([-75, 0, 0], [-25, 0, 0], {
      zoneLengthMm: 16,
      zoneWidthMm: 16,
      tipOffsetMm: 0,
    });
    const vein = tubes([{ code: VEIN, radiusMm: 2.5, through: [-24.9, 13.5, 0], axis: [0, 0, 1] }]);
    const found = findHeatSinks({
      cropGeometry: geometry,
      kindCodes: vein,
      zoneSurface: ellipsoidZoneSurface([zone, second], geometry),
      boundaryErrorMm: 0,
      vessels: [{ kind: 'hepatic-vein', calibre: calibreOf(vein, VEIN) }],
      heatSinkDiameterMm: 3,
      heatSinkDistanceMm: 10,
    });
    expect(found).toHaveLength(1);
    expect(Math.abs(found[0].distanceMm - 3)).toBeLessThanOrEqual(spacingMm[1] / 2);
    expect(found[0].distanceLowerMm).toBeLessThanOrEqual(3);
  });
});
