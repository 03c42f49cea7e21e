import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { voxelCount, voxelToLps } from '../geometry/patient-geometry';
import { addScaled, cross, dot, normalize, subtract, type Vec3 } from '../geometry/vector';
import { measureZoneAlongShaft, zoneReachMm, zoneSurfacePoints } from './zone-measurement';

/** Axes turned 25° about (2, 1, 2)/3 (Rodrigues' formula). */
function obliqueGeometry(dimensions: [number, number, number], spacingMm: Vec3): VolumeGeometry {
  const axis: Vec3 = [2 / 3, 1 / 3, 2 / 3];
  const angleRad = (25 * Math.PI) / 180;
  const turn = (vector: Vec3): Vec3 => {
    const across = cross(axis, vector);
    const along = dot(axis, vector) * (1 - Math.cos(angleRad));
    return [0, 1, 2].map(
      (index) =>
        vector[index] * Math.cos(angleRad) +
        across[index] * Math.sin(angleRad) +
        axis[index] * along,
    ) as Vec3;
  };
  return {
    dimensions,
    spacingMm,
    originLps: [-30, -30, -30],
    direction: [turn([1, 0, 0]), turn([0, 1, 0]), turn([0, 0, 1])],
  };
}

const TIP: Vec3 = [2, 1, -3];
const ENTRY: Vec3 = [40, 55, 70];

/**
 * Ω = exp(3·(1 − ρ)), ρ the ellipsoidal radius of a spheroid with semi-axes `alongMm` on the
 * shaft and `acrossMm` across it, centred `offsetMm` behind the tip: Ω = 1 exactly on its surface.
 */
function spheroidOmega(
  geometry: VolumeGeometry,
  alongMm: number,
  acrossMm: number,
  offsetMm: number,
): Float64Array {
  const axis = normalize(subtract(ENTRY, TIP));
  const centre = addScaled(TIP, axis, offsetMm);
  const [nx, ny] = geometry.dimensions;
  return Float64Array.from({ length: voxelCount(geometry.dimensions) }, (_, index) => {
    const voxel: Vec3 = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
    const offset = subtract(voxelToLps(geometry, voxel), centre);
    const along = dot(offset, axis);
    const across = Math.sqrt(Math.max(0, dot(offset, offset) - along * along));
    return Math.exp(3 * (1 - Math.hypot(along / alongMm, across / acrossMm)));
  });
}

describe('zone size against the shaft', () => {
  /*
   * Tolerance 0.1 mm: ln Ω is interpolated linearly between voxel centres, so a crossing lies off
   * the curved surface by at most its sagitta over one voxel, h²/(8R) = 0.03 mm for h = 1.5 mm
   * and R ≥ 10 mm, and the sampled extremes fall short of the true ones by as much again.
   */
  it('measures the length, width and centre of a spheroid on an oblique grid within 0.1 mm', () => {
    const geometry = obliqueGeometry([44, 44, 44], [1.5, 1.5, 1.5]);
    const omega = spheroidOmega(geometry, 20, 13, 9);
    const size = measureZoneAlongShaft(zoneSurfacePoints(omega, geometry), TIP, ENTRY);
    expect(Math.abs(size.lengthMm - 40)).toBeLessThan(0.1);
    expect(Math.abs(size.widthMm - 26)).toBeLessThan(0.1);
    expect(Math.abs((size.tipOffsetMm ?? NaN) - 9)).toBeLessThan(0.1);
    expect(size.touchesGridWall).toBe(false);
  });

  it('varies smoothly, not in voxel steps, as the zone grows by a tenth of a voxel', () => {
    const geometry = obliqueGeometry([40, 40, 40], [1.5, 1.5, 1.5]);
    const widths = [12, 12.075, 12.15].map(
      (acrossMm) =>
        measureZoneAlongShaft(
          zoneSurfacePoints(spheroidOmega(geometry, 18, acrossMm, 5), geometry),
          TIP,
          ENTRY,
        ).widthMm,
    );
    expect(widths[1] - widths[0]).toBeCloseTo(0.15, 1);
    expect(widths[2] - widths[1]).toBeCloseTo(0.15, 1);
  });

  it('reports no zone when Ω stays below 1, and a zone cut by the grid as touching a wall', () => {
    const geometry = obliqueGeometry([20, 20, 20], [2, 2, 2]);
    const none = measureZoneAlongShaft(
      zoneSurfacePoints(new Float64Array(8000).fill(0.5), geometry),
      TIP,
      ENTRY,
    );
    expect(none).toEqual({ lengthMm: 0, widthMm: 0, tipOffsetMm: null, touchesGridWall: false });
    const cut = zoneSurfacePoints(spheroidOmega(geometry, 40, 30, 0), geometry);
    expect(cut.touchesGridWall).toBe(true);
  });

  it('measures how far the zone reaches from a point in a direction', () => {
    const geometry = obliqueGeometry([44, 44, 44], [1.5, 1.5, 1.5]);
    const surface = zoneSurfacePoints(spheroidOmega(geometry, 20, 13, 9), geometry);
    const axis = normalize(subtract(ENTRY, TIP));
    const centre = addScaled(TIP, axis, 9);
    const across = normalize(cross(axis, [0, 0, 1]));
    expect(Math.abs(zoneReachMm(surface, centre, axis) - 20)).toBeLessThan(0.1);
    expect(Math.abs(zoneReachMm(surface, centre, across) - 13)).toBeLessThan(0.1);
  });
});
