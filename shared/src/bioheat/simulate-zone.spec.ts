import { describe, expect, it } from 'vitest';
import { clinicalCaution } from '../api/caution';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { lpsToVoxel, voxelCount, voxelToLps } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import type { ZoneApplicator } from './applicator-heating';
import { homogeneousZoneSizes } from './homogeneous-zone';
import { BioheatAbortedError } from './pennes-solver';
import { simulateAblationZone } from './simulate-zone';
import { zoneCropGeometry } from './zone-crop';
import { measureZoneAlongShaft, zoneReachMm, zoneSurfacePoints } from './zone-measurement';

const IDENTITY: VolumeGeometry['direction'] = [
  [1, 0, 0],
  [0, 1, 0],
  [0, 0, 1],
];

/** An invented applicator for the tests: shaft along +z from the tip at the origin. */
const APPLICATOR: ZoneApplicator = {
  entryLps: [0, 0, 100],
  tipLps: [0, 0, 0],
  activeLengthMm: 20,
  powerW: 60,
  timeS: 300,
  calibration: 0.3,
};

function sizeOf(
  omega: Float32Array | Float64Array,
  geometry: VolumeGeometry,
  applicator = APPLICATOR,
) {
  return measureZoneAlongShaft(
    zoneSurfacePoints(omega, geometry),
    applicator.tipLps,
    applicator.entryLps,
  );
}

describe('physics ablation zone of a plan', () => {
  it('is the zone of the calibration model when the grid is laid out alike', () => {
    // Shaft through voxel corners, slices at odd multiples of h/2 from the tip: the lattice of
    // the quarter-grid calibration run, here simulated whole on a larger grid.
    const h = 2;
    const geometry: VolumeGeometry = {
      dimensions: [40, 40, 46],
      spacingMm: [h, h, h],
      originLps: [-19.5 * h, -19.5 * h, -35],
      direction: IDENTITY,
    };
    const whole = sizeOf(
      simulateAblationZone({ geometry, applicators: [APPLICATOR] }).omega,
      geometry,
    );
    const [quarter] = homogeneousZoneSizes(20, [{ powerW: 60, timeS: 300 }], 0.3, { spacingMm: h });
    // Equal up to the grid walls, which sit farther out here (and the float32 Ω of the result).
    expect(Math.abs(whole.lengthMm - quarter.lengthMm)).toBeLessThan(0.01);
    expect(Math.abs(whole.widthMm - quarter.widthMm)).toBeLessThan(0.01);
    expect(whole.lengthMm).toBeGreaterThan(30);
  });

  it('does not depend on how the shaft lies on the grid by more than a sixth of a voxel', () => {
    const h = 2;
    const oblique: ZoneApplicator = { ...APPLICATOR, tipLps: [3, -2, 5], entryLps: [60, 20, 90] };
    const aligned = zoneCropGeometry([APPLICATOR], IDENTITY, [h, h, h], 25);
    const slanted = zoneCropGeometry([oblique], IDENTITY, [h, h, h], 25);
    const along = sizeOf(
      simulateAblationZone({ geometry: aligned, applicators: [APPLICATOR] }).omega,
      aligned,
    );
    const across = sizeOf(
      simulateAblationZone({ geometry: slanted, applicators: [oblique] }).omega,
      slanted,
      oblique,
    );
    // The seven-point stencil is isotropic only to O(h²); the zone's edge also moves with where
    // it falls between voxel centres. A sixth of a 2 mm voxel bounds both here.
    expect(Math.abs(along.lengthMm - across.lengthMm)).toBeLessThan(h / 6);
    expect(Math.abs(along.widthMm - across.widthMm)).toBeLessThan(h / 6);
  });

  /*
   * Large vessels carry heat away: incomplete ablation next to veins over 3 mm (Lu DSK et al.,
   * AJR 2002;178:47). A vessel 5 mm across, parallel to the shaft 11 mm from it, clamped at
   * blood temperature.
   */
  it('shrinks the zone on the side of a heat-sink vessel', () => {
    const geometry = zoneCropGeometry([APPLICATOR], IDENTITY, [2, 2, 2], 25);
    const [nx, ny] = geometry.dimensions;
    const heatSinkMask = Uint8Array.from(
      { length: voxelCount(geometry.dimensions) },
      (_, index) => {
        const voxel: Vec3 = [
          index % nx,
          Math.floor(index / nx) % ny,
          Math.floor(index / (nx * ny)),
        ];
        const [x, y] = voxelToLps(geometry, voxel);
        return Math.hypot(x - 11, y) <= 2.5 ? 1 : 0;
      },
    );
    const homogeneous = zoneSurfacePoints(
      simulateAblationZone({ geometry, applicators: [APPLICATOR] }).omega,
      geometry,
    );
    const sunk = zoneSurfacePoints(
      simulateAblationZone({ geometry, heatSinkMask, applicators: [APPLICATOR] }).omega,
      geometry,
    );
    const middle: Vec3 = [0, 0, 10];
    const towardsVessel = zoneReachMm(sunk, middle, [1, 0, 0]);
    expect(towardsVessel).toBeLessThan(zoneReachMm(homogeneous, middle, [1, 0, 0]) - 1);
    expect(towardsVessel).toBeLessThan(zoneReachMm(sunk, middle, [-1, 0, 0]) - 1);
    // The far side barely notices the vessel.
    expect(
      Math.abs(
        zoneReachMm(sunk, middle, [-1, 0, 0]) - zoneReachMm(homogeneous, middle, [-1, 0, 0]),
      ),
    ).toBeLessThan(1);
  });

  it('heats with applicators together: the joint zone holds both single zones and more', () => {
    // Comparison principle of the heat equation: adding a non-negative source can only raise
    // every temperature, and Ω grows with temperature.
    const first: ZoneApplicator = { ...APPLICATOR, tipLps: [-9, 0, 0], entryLps: [-9, 0, 100] };
    const second: ZoneApplicator = {
      ...APPLICATOR,
      tipLps: [9, 0, 0],
      entryLps: [9, 0, 100],
      timeS: 200,
    };
    const geometry = zoneCropGeometry([first, second], IDENTITY, [2, 2, 2], 25);
    const alone = [first, second].map((applicator) =>
      simulateAblationZone({ geometry, applicators: [applicator] }),
    );
    const together = simulateAblationZone({ geometry, applicators: [first, second] });
    let union = 0;
    for (let index = 0; index < together.damageMask.length; index++) {
      const isInEither = alone[0].damageMask[index] === 1 || alone[1].damageMask[index] === 1;
      if (isInEither) {
        union++;
        expect(together.damageMask[index]).toBe(1);
      }
    }
    const jointVoxels = together.damageMask.reduce((sum, value) => sum + value, 0);
    expect(jointVoxels).toBeGreaterThan(union);
    // The second stops at 200 s: the zone of both for 300 s would be larger still.
    const longer = simulateAblationZone({
      geometry,
      applicators: [first, { ...second, timeS: 300 }],
    });
    expect(longer.volumeMl).toBeGreaterThan(together.volumeMl);
  });

  it('answers fields on the crop grid, the volume of Ω ≥ 1 and the clinical caution', () => {
    const geometry = zoneCropGeometry([APPLICATOR], IDENTITY, [2, 2, 2], 20);
    const fractions: number[] = [];
    const result = simulateAblationZone({
      geometry,
      applicators: [APPLICATOR],
      onProgress: (fraction) => fractions.push(fraction),
    });
    let damaged = 0;
    result.omega.forEach((omega, index) => {
      expect(result.damageMask[index]).toBe(omega >= 1 ? 1 : 0);
      damaged += result.damageMask[index];
    });
    // Outwards from the shaft the peak temperature and the thermal dose fall together (the
    // Arrhenius and CEM43 thresholds are not compared: they disagree by design, Pearce, Crit Rev
    // Biomed Eng 2010;38:1).
    const [nx, ny] = geometry.dimensions;
    const [i0, j0, k0] = lpsToVoxel(geometry, [0, 0, 10]).map(Math.round);
    for (let i = i0; i < nx - 1; i++) {
      const index = i + nx * (j0 + ny * k0);
      expect(result.peakTemperatureC[index + 1]).toBeLessThan(result.peakTemperatureC[index]);
      expect(result.cem43[index + 1]).toBeLessThanOrEqual(result.cem43[index]);
    }
    expect(result.cem43[nx - 1 + nx * (j0 + ny * k0)]).toBeLessThan(1);
    expect(result.volumeMl).toBeCloseTo((damaged * 8) / 1000, 9);
    expect(result.geometry).toBe(geometry);
    expect(Math.max(...result.peakTemperatureC)).toBeGreaterThan(100);
    expect(fractions.at(-1)).toBe(1);
    expect(result.caution).toBe(clinicalCaution);
  });

  it('stops when cancelled and refuses a heat-sink mask of the wrong size', () => {
    const geometry = zoneCropGeometry([APPLICATOR], IDENTITY, [2, 2, 2], 20);
    expect(() =>
      simulateAblationZone({ geometry, applicators: [APPLICATOR], shouldAbort: () => true }),
    ).toThrow(BioheatAbortedError);
    expect(() =>
      simulateAblationZone({
        geometry,
        applicators: [APPLICATOR],
        heatSinkMask: new Uint8Array(7),
      }),
    ).toThrow(/heatSinkMask has 7 voxels, the crop grid/);
    expect(() => simulateAblationZone({ geometry, applicators: [] })).toThrow(
      /at least one applicator/,
    );
  });
});
