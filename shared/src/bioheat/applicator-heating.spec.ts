import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { voxelToLps } from '../geometry/patient-geometry';
import {
  addScaled,
  cross,
  distance,
  dot,
  normalize,
  subtract,
  type Vec3,
} from '../geometry/vector';
import {
  SOURCE_RADIUS_MM,
  applicatorHeatingPhases,
  applicatorPowerDensity,
  type ZoneApplicator,
} from './applicator-heating';
import { zoneCropGeometry } from './zone-crop';

const IDENTITY: VolumeGeometry['direction'] = [
  [1, 0, 0],
  [0, 1, 0],
  [0, 0, 1],
];

/** Axes turned 30° about (1, 2, 2)/3 (Rodrigues' formula). */
function obliqueDirection(): VolumeGeometry['direction'] {
  const axis: Vec3 = [1 / 3, 2 / 3, 2 / 3];
  const angleRad = Math.PI / 6;
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
  return [turn([1, 0, 0]), turn([0, 1, 0]), turn([0, 0, 1])];
}

const applicator: ZoneApplicator = {
  entryLps: [60, -80, 140],
  tipLps: [12, 4, -20],
  activeLengthMm: 25,
  powerW: 80,
  timeS: 600,
  calibration: 0.4,
};

describe('power density of an applicator (Gaussian about the active segment)', () => {
  it.each([
    { name: 'an axis-aligned 2 mm grid', direction: IDENTITY, spacingMm: [2, 2, 2] as Vec3 },
    {
      name: 'an oblique anisotropic grid',
      direction: obliqueDirection(),
      spacingMm: [1.5, 1.2, 2.5] as Vec3,
    },
  ])('deposits η·P on $name', ({ direction, spacingMm }) => {
    // The grid sum approximates the integral: the Gaussian factor aliases by 2·exp(−2π²σ²/h²)
    // (Poisson summation; < 1e-8 at h ≤ σ), the cut-off at 5σ drops exp(−12.5) = 4e-6, and the
    // planes through the segment's ends, where the field's curvature jumps, leave an error of
    // order h² (1e-4 at 2.5 mm on the oblique grid). Hence 5e-4.
    const geometry = zoneCropGeometry([applicator], direction, spacingMm, 20);
    const density = applicatorPowerDensity(geometry, applicator);
    expect(density.absorbedPowerW).toBeCloseTo(0.4 * 80, 12);
    expect(Math.abs(density.depositedPowerW / density.absorbedPowerW - 1)).toBeLessThan(5e-4);
  });

  it('is flat along the active segment, ends at the tip, falls as exp(−d²/2σ²) across it', () => {
    // A grid whose voxel centres lie on the shaft (x = y = 0) every 0.5 mm.
    const geometry: VolumeGeometry = {
      dimensions: [41, 41, 121],
      spacingMm: [0.5, 0.5, 0.5],
      originLps: [-10, -10, -20],
      direction: IDENTITY,
    };
    const straight: ZoneApplicator = { ...applicator, tipLps: [0, 0, 0], entryLps: [0, 0, 100] };
    const { powerDensityWPerM3: density } = applicatorPowerDensity(geometry, straight);
    const at = (point: Vec3) => {
      const index = [0, 1, 2].map((axis) =>
        Math.round((point[axis] - geometry.originLps[axis]) / 0.5),
      );
      return density[index[0] + 41 * (index[1] + 41 * index[2])];
    };
    const peak = at([0, 0, 12.5]);
    expect(at([0, 0, 1])).toBeCloseTo(peak, 6);
    expect(at([0, 0, 24])).toBeCloseTo(peak, 6);
    expect(at([SOURCE_RADIUS_MM, 0, 12.5]) / peak).toBeCloseTo(Math.exp(-0.5), 9);
    expect(at([0, 0, -SOURCE_RADIUS_MM]) / peak).toBeCloseTo(Math.exp(-0.5), 9);
    expect(at([0, 0, 25 + 2 * SOURCE_RADIUS_MM]) / peak).toBeCloseTo(Math.exp(-2), 9);
  });

  it('centres the heating halfway along the active segment behind the tip', () => {
    const geometry = zoneCropGeometry([applicator], obliqueDirection(), [1.5, 1.5, 1.5], 20);
    const { powerDensityWPerM3: density } = applicatorPowerDensity(geometry, applicator);
    const [nx, ny] = geometry.dimensions;
    let weight = 0;
    let centroid: Vec3 = [0, 0, 0];
    density.forEach((value, index) => {
      if (value === 0) return;
      const voxel: Vec3 = [index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))];
      centroid = addScaled(centroid, voxelToLps(geometry, voxel), value);
      weight += value;
    });
    centroid = centroid.map((value) => value / weight) as Vec3;
    const axis = normalize(subtract(applicator.entryLps, applicator.tipLps));
    expect(distance(centroid, addScaled(applicator.tipLps, axis, 12.5))).toBeLessThan(0.05);
  });

  it.each([4, -3])(
    'moves the segment %s mm behind the tip with its offset, power unchanged',
    (offsetMm) => {
      const moved: ZoneApplicator = { ...applicator, segmentOffsetMm: offsetMm };
      const geometry = zoneCropGeometry([moved], IDENTITY, [1.5, 1.5, 1.5], 20);
      const density = applicatorPowerDensity(geometry, moved);
      const [nx, ny] = geometry.dimensions;
      let weight = 0;
      let centroid: Vec3 = [0, 0, 0];
      density.powerDensityWPerM3.forEach((value, index) => {
        const voxel: Vec3 = [
          index % nx,
          Math.floor(index / nx) % ny,
          Math.floor(index / (nx * ny)),
        ];
        centroid = addScaled(centroid, voxelToLps(geometry, voxel), value);
        weight += value;
      });
      centroid = centroid.map((value) => value / weight) as Vec3;
      const axis = normalize(subtract(moved.entryLps, moved.tipLps));
      expect(distance(centroid, addScaled(moved.tipLps, axis, offsetMm + 12.5))).toBeLessThan(0.05);
      // The crop follows the segment, so it still holds η·P within the 5e-4 of the grid.
      expect(Math.abs(density.depositedPowerW / density.absorbedPowerW - 1)).toBeLessThan(5e-4);
    },
  );
});

describe('heating phases of several applicators', () => {
  const second: ZoneApplicator = {
    ...applicator,
    tipLps: [30, 4, -20],
    entryLps: [78, -80, 140],
    timeS: 300,
    powerW: 40,
  };

  it('heats with both until the shorter time, then with the longer one alone', () => {
    const geometry = zoneCropGeometry([applicator, second], IDENTITY, [2, 2, 2], 20);
    const phases = applicatorHeatingPhases(geometry, [applicator, second]);
    expect(phases.map((phase) => phase.durationS)).toEqual([300, 300]);
    const first = applicatorPowerDensity(geometry, applicator).powerDensityWPerM3;
    const other = applicatorPowerDensity(geometry, second).powerDensityWPerM3;
    const [both, alone] = phases.map((phase) => phase.powerDensityWPerM3 as Float64Array);
    for (let index = 0; index < first.length; index += 97) {
      expect(both[index]).toBeCloseTo(first[index] + other[index], 6);
      expect(alone[index]).toBeCloseTo(first[index], 6);
    }
  });

  it('refuses a crop grid that cuts through a heating segment', () => {
    const geometry = zoneCropGeometry([second], IDENTITY, [2, 2, 2], 20);
    expect(() => applicatorHeatingPhases(geometry, [applicator, second])).toThrow(
      /applicators\[0\]: the grid holds .* the crop grid must contain the whole heating segment/,
    );
  });

  it.each([
    [{ tipLps: [60, -80, 140] as Vec3 }, /tipLps and entryLps must be at least 1 mm apart/],
    [{ activeLengthMm: 0 }, /applicators\[0\]\.activeLengthMm must be a positive number/],
    [{ powerW: -5 }, /applicators\[0\]\.powerW must be 0 or more/],
    [{ calibration: Number.NaN }, /applicators\[0\]\.calibration must be a positive number/],
    [
      { entryLps: [1, 2] as unknown as Vec3 },
      /applicators\[0\]\.entryLps must be 3 finite numbers/,
    ],
  ])('refuses a malformed applicator, naming the field (%#)', (override, message) => {
    const geometry = zoneCropGeometry([applicator], IDENTITY, [2, 2, 2], 20);
    expect(() => applicatorHeatingPhases(geometry, [{ ...applicator, ...override }])).toThrow(
      message,
    );
  });

  it('refuses a grid whose axes are not perpendicular unit vectors', () => {
    const geometry = zoneCropGeometry([applicator], IDENTITY, [2, 2, 2], 20);
    const sheared = {
      ...geometry,
      direction: [
        [1, 0, 0],
        [0.1, 1, 0],
        [0, 0, 1],
      ] as VolumeGeometry['direction'],
    };
    expect(() => applicatorHeatingPhases(sheared, [applicator])).toThrow(
      /perpendicular unit vectors/,
    );
  });
});
