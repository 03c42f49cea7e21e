import { describe, expect, it } from 'vitest';
import { euclideanDistanceTransform, signedDistanceTransform } from './distance-transform';
import {
  halfVoxelDiagonalMm,
  lengthInsideMask,
  lengthInsideSignedField,
  pathClearance,
  pathSampling,
  sampleField,
  type DistanceField,
} from './path-clearance';
import { voxelCount, voxelToLps, type VolumeGeometry } from './patient-geometry';
import { addScaled, cross, distance, dot, normalize, subtract, type Vec3 } from './vector';

/**
 * Tolerance of a clearance read from the EDT of a voxelised vessel, h = half the voxel
 * diagonal: trilinear interpolation of a 1-Lipschitz field is within ±h of the distance to
 * the voxel centres (see path-clearance.ts), and voxelising a vessel of radius ≥ h by its
 * centres moves its surface outwards by 0 to 2h (every ball of radius h holds a centre). So
 * −h ≤ clearance − (d − r) ≤ 3h (derived here from the triangle inequality).
 */
function voxelisationBounds(spacingMm: Vec3): { belowMm: number; aboveMm: number } {
  const h = halfVoxelDiagonalMm(spacingMm);
  return { belowMm: h, aboveMm: 3 * h };
}

/** An oblique grid: the axes turned 20° about (1, 2, 2)/3 (Rodrigues' formula). */
function obliqueGeometry(dimensions: [number, number, number], spacingMm: Vec3): VolumeGeometry {
  const axis: Vec3 = [1 / 3, 2 / 3, 2 / 3];
  const angleRad = (20 * Math.PI) / 180;
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
    originLps: [-40, 15, -300],
    direction: [turn([1, 0, 0]), turn([0, 1, 0]), turn([0, 0, 1])],
  };
}

function maskWhere(geometry: VolumeGeometry, isInside: (pointLps: Vec3) => boolean): Uint8Array {
  const [nx, ny] = geometry.dimensions;
  return Uint8Array.from({ length: voxelCount(geometry.dimensions) }, (_, index) => {
    const voxel: Vec3 = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
    return isInside(voxelToLps(geometry, voxel)) ? 1 : 0;
  });
}

/** Distance from a point to the line through `through` along the unit `axis`, mm. */
function distanceToLine(pointLps: Vec3, through: Vec3, axis: Vec3): number {
  const offset = subtract(pointLps, through);
  return distance(offset, addScaled([0, 0, 0], axis, dot(offset, axis)));
}

describe('clearance beside an analytic cylinder (a vessel of radius r)', () => {
  const spacingMm: Vec3 = [0.8, 0.9, 1.25];
  const geometry = obliqueGeometry([64, 56, 40], spacingMm);
  const centreLps = voxelToLps(geometry, [31.5, 27.5, 19.5]);
  const vesselAxis = normalize([0.3, 0.9, 0.2]);
  const sideways = normalize(cross(vesselAxis, [0, 0, 1]));
  const { belowMm, aboveMm } = voxelisationBounds(spacingMm);

  function vessel(radiusMm: number): { mask: Uint8Array; field: DistanceField } {
    const mask = maskWhere(
      geometry,
      (point) => distanceToLine(point, centreLps, vesselAxis) <= radiusMm,
    );
    const valuesMm = euclideanDistanceTransform(mask, geometry.dimensions, spacingMm);
    return { mask, field: { valuesMm, geometry } };
  }

  /** The oracle for the voxelised vessel: the nearest mask voxel centre, by brute force. */
  function nearestCentreMm(mask: Uint8Array, pointLps: Vec3): number {
    const [nx, ny] = geometry.dimensions;
    let best = Infinity;
    mask.forEach((value, index) => {
      if (value === 0) return;
      const voxel: Vec3 = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
      best = Math.min(best, distance(voxelToLps(geometry, voxel), pointLps));
    });
    return best;
  }

  it.each([
    { radiusMm: 3, offsetMm: 8 },
    { radiusMm: 2, offsetMm: 5 },
    { radiusMm: 4.5, offsetMm: 14 },
    { radiusMm: 1.5, offsetMm: 2.2 },
  ])(
    'reads d − r for a path parallel to a vessel of radius $radiusMm mm at $offsetMm mm',
    ({ radiusMm, offsetMm }) => {
      const { mask, field } = vessel(radiusMm);
      const middle = addScaled(centreLps, sideways, offsetMm);
      const entry = addScaled(middle, vesselAxis, -6);
      const tip = addScaled(middle, vesselAxis, 6);
      const clearance = pathClearance(field, entry, tip);
      const expectedMm = offsetMm - radiusMm;
      expect(clearance.samplesOutsideField).toBe(0);
      expect(clearance.minimumDistanceMm).toBeGreaterThanOrEqual(expectedMm - belowMm);
      expect(clearance.minimumDistanceMm).toBeLessThanOrEqual(expectedMm + aboveMm);

      // Against the voxelised vessel itself the only error left is interpolation, ±h.
      const samples = Array.from({ length: clearance.sampleCount }, (_, index) =>
        addScaled(entry, subtract(tip, entry), index / (clearance.sampleCount - 1)),
      );
      const oracleMm = Math.min(...samples.map((point) => nearestCentreMm(mask, point)));
      expect(Math.abs((clearance.minimumDistanceMm ?? NaN) - oracleMm)).toBeLessThanOrEqual(
        belowMm,
      );
    },
  );

  it('reads about −r in the signed field where a path crosses the vessel’s axis', () => {
    const radiusMm = 3;
    const { mask } = vessel(radiusMm);
    const signed = {
      valuesMm: signedDistanceTransform(mask, geometry.dimensions, spacingMm),
      geometry,
    };
    const entry = addScaled(centreLps, sideways, -10);
    const tip = addScaled(centreLps, sideways, 10);
    const clearance = pathClearance(signed, entry, tip);
    // Outside centres are all beyond r from the axis; one lies within 2h of radius r + h.
    expect(clearance.minimumDistanceMm).toBeGreaterThanOrEqual(-radiusMm - aboveMm);
    expect(clearance.minimumDistanceMm).toBeLessThanOrEqual(-radiusMm + belowMm);
    // The signed field is V-shaped there (slope 1 either side), so the error budget (−h, +3h)
    // places the minimum within 4h of the axis.
    expect(Math.abs((clearance.minimumFromEntryMm ?? NaN) - 10)).toBeLessThanOrEqual(
      belowMm + aboveMm,
    );
  });

  it('reports where the minimum lies consistently: distance from entry, LPS, field value', () => {
    const { field } = vessel(3);
    const entry = addScaled(centreLps, sideways, 16);
    const tip = addScaled(centreLps, sideways, 6);
    const clearance = pathClearance(field, entry, tip);
    const at = clearance.minimumAtLps ?? [NaN, NaN, NaN];
    expect(distance(at, entry)).toBeCloseTo(clearance.minimumFromEntryMm ?? NaN, 9);
    expect(sampleField(field, at)).toBeCloseTo(clearance.minimumDistanceMm ?? NaN, 5);
    // Heading straight at the vessel, the closest approach is near the tip: within 4h of it,
    // the error budget of two readings (−h, +3h).
    expect(clearance.minimumFromEntryMm).toBeGreaterThanOrEqual(10 - belowMm - aboveMm);
  });
});

describe('a slab of tissue (voxel slices k = 10 to 17, 8 × 1.25 mm = 10 mm thick)', () => {
  const spacingMm: Vec3 = [0.8, 0.8, 1.25];
  const geometry: VolumeGeometry = {
    dimensions: [30, 30, 40],
    spacingMm,
    originLps: [-12, -12, -25],
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };
  const mask = maskWhere(geometry, (point) => {
    const k = (point[2] - geometry.originLps[2]) / spacingMm[2];
    return k > 9.5 && k < 17.5;
  });
  const signed: DistanceField = {
    valuesMm: signedDistanceTransform(mask, geometry.dimensions, spacingMm),
    geometry,
  };
  const unsigned: DistanceField = {
    valuesMm: euclideanDistanceTransform(mask, geometry.dimensions, spacingMm),
    geometry,
  };
  const at = (i: number, j: number, k: number) => voxelToLps(geometry, [i, j, k]);
  const tiltRad = Math.PI / 6;
  const obliqueEntry = at(3, 15, 3);
  const obliqueTip = addScaled(
    obliqueEntry,
    [Math.sin(tiltRad), 0, Math.cos(tiltRad)],
    31.25 / Math.cos(tiltRad),
  );

  // The field depends on k alone and is linear between the centres on either side of each
  // face, so the sign change falls on the face exactly (voxel-centre convention).
  it.each([
    {
      name: 'crossing it at right angles',
      entry: at(15, 15, 2),
      tip: at(15, 15, 30),
      insideMm: 10,
    },
    {
      name: 'crossing it at 30° from its normal (10 / cos 30°)',
      entry: obliqueEntry,
      tip: obliqueTip,
      insideMm: 10 / Math.cos(tiltRad),
    },
    {
      name: 'starting inside it',
      entry: at(15, 15, 12),
      tip: at(15, 15, 30),
      insideMm: 5.5 * 1.25,
    },
    { name: 'ending before it', entry: at(15, 15, 2), tip: at(15, 15, 9), insideMm: 0 },
  ])(
    'finds the slab’s thickness inside, $name, from the signed field',
    ({ entry, tip, insideMm }) => {
      expect(lengthInsideSignedField(signed, entry, tip)).toBeCloseTo(insideMm, 4);
    },
  );

  it.each([
    { name: 'at right angles', entry: at(15, 15, 2), tip: at(15, 15, 30), insideMm: 10 },
    {
      name: 'at 30° from its normal',
      entry: obliqueEntry,
      tip: obliqueTip,
      insideMm: 10 / Math.cos(tiltRad),
    },
  ])(
    'finds it from the mask within a step (half a step per crossing), $name',
    ({ entry, tip, insideMm }) => {
      const { stepMm } = pathSampling(entry, tip);
      expect(Math.abs(lengthInsideMask(mask, geometry, entry, tip) - insideMm)).toBeLessThanOrEqual(
        stepMm,
      );
    },
  );

  it('counts what lies beyond the grid as outside', () => {
    const beyond = at(15, 15, 60);
    expect(lengthInsideSignedField(signed, at(15, 15, 12), beyond)).toBeCloseTo(5.5 * 1.25, 4);
    expect(lengthInsideMask(mask, geometry, at(15, 15, 12), beyond)).toBeCloseTo(5.5 * 1.25, 0);
  });

  it('puts the closest approach at the tip of a path heading straight at it', () => {
    // Along k the unsigned field is exactly linear (the slab's faces are grid planes).
    const clearance = pathClearance(unsigned, at(15, 15, 30), at(15, 15, 22));
    expect(clearance.minimumFromEntryMm).toBeCloseTo(10, 9);
    expect(clearance.minimumDistanceMm).toBeCloseTo(5 * 1.25, 5);
    clearance.minimumAtLps?.forEach((value, axis) =>
      expect(value).toBeCloseTo(at(15, 15, 22)[axis], 9),
    );
  });
});

describe('sampling a path (steps of at most 0.5 mm)', () => {
  it.each([
    { lengthMm: 10, maximumStepMm: 0.5, sampleCount: 21, stepMm: 0.5 },
    { lengthMm: 10.1, maximumStepMm: 0.5, sampleCount: 22, stepMm: 10.1 / 21 },
    { lengthMm: 0.2, maximumStepMm: 0.5, sampleCount: 2, stepMm: 0.2 },
    { lengthMm: 3, maximumStepMm: 0.25, sampleCount: 13, stepMm: 0.25 },
    { lengthMm: 0, maximumStepMm: 0.5, sampleCount: 1, stepMm: 0 },
  ])(
    'samples $lengthMm mm at most $maximumStepMm mm apart with $sampleCount samples',
    ({ lengthMm, maximumStepMm, sampleCount, stepMm }) => {
      const direction = normalize([2, -1, 2]);
      const sampling = pathSampling(
        [1, 2, 3],
        addScaled([1, 2, 3], direction, lengthMm),
        maximumStepMm,
      );
      expect(sampling.sampleCount).toBe(sampleCount);
      expect(sampling.stepMm).toBeCloseTo(stepMm, 12);
      expect(sampling.lengthMm).toBeCloseTo(lengthMm, 12);
    },
  );

  it('refuses a step that is not positive', () => {
    expect(() => pathSampling([0, 0, 0], [1, 0, 0], 0)).toThrow(RangeError);
  });
});

describe('fields and paths at the edges', () => {
  const geometry: VolumeGeometry = {
    dimensions: [4, 4, 4],
    spacingMm: [1, 1, 1],
    originLps: [0, 0, 0],
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };

  it('interpolates trilinearly between centres, reproducing a linear field exactly', () => {
    const valuesMm = Float32Array.from({ length: 64 }, (_, index) => {
      const [i, j, k] = [index % 4, Math.floor(index / 4) % 4, Math.floor(index / 16)];
      return 2 * i - j + 0.5 * k + 3;
    });
    expect(sampleField({ valuesMm, geometry }, [1.25, 2.5, 0.75])).toBeCloseTo(3.375, 6);
    expect(sampleField({ valuesMm, geometry }, [3, 3, 3])).toBeCloseTo(7.5, 6);
    expect(sampleField({ valuesMm, geometry }, [3.01, 0, 0])).toBeNull();
  });

  it('answers no minimum for a path wholly beyond the grid, and counts its samples', () => {
    const field = { valuesMm: new Float32Array(64), geometry };
    const clearance = pathClearance(field, [10, 10, 10], [12, 10, 10]);
    expect(clearance.minimumDistanceMm).toBeNull();
    expect(clearance.samplesOutsideField).toBe(5);
  });

  it('answers Infinity for the field of an empty mask', () => {
    const valuesMm = euclideanDistanceTransform(new Uint8Array(64), [4, 4, 4], [1, 1, 1]);
    expect(pathClearance({ valuesMm, geometry }, [0, 0, 0], [3, 3, 3]).minimumDistanceMm).toBe(
      Infinity,
    );
  });

  it('refuses a field whose length does not match its grid', () => {
    const field = { valuesMm: new Float32Array(63), geometry };
    expect(() => pathClearance(field, [0, 0, 0], [1, 1, 1])).toThrow(RangeError);
  });
});
