import { voxelToLps, type VolumeGeometry } from '@emberline/shared';
import { directionLetters, sliceAxesOf } from './slice-axes';
import {
  screenToLps,
  slicePlanePoint,
  sliceIndexAt,
  stepSlices,
  fittedViewport,
} from './slice-viewport';

/**
 * Worked example computed from DICOM PS3.3 C.7.6.2.1.1 [C]: IPP (−175, −200, 50),
 * IOP (1,0,0, 0,1,0), Pixel Spacing [0.7, 0.8].
 */
const axialGrid: VolumeGeometry = {
  dimensions: [200, 120, 40],
  spacingMm: [0.8, 0.7, 2.5],
  originLps: [-175, -200, 50],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};

/** The coronal example of the same source: IOP (1,0,0, 0,0,−1), IPP (−250, 30, 120). */
const coronalGrid: VolumeGeometry = {
  dimensions: [200, 120, 40],
  spacingMm: [0.8, 0.7, 2],
  originLps: [-250, 30, 120],
  // Slice normal = row × column = (1,0,0) × (0,0,−1) = (0, 1, 0).
  direction: [
    [1, 0, 0],
    [0, 0, -1],
    [0, 1, 0],
  ],
};

function closeTo(actual: readonly number[], expected: readonly number[], digits = 9): void {
  actual.forEach((value, index) => expect(value).toBeCloseTo(expected[index], digits));
}

describe('slice view axes', () => {
  it('gives an axial series its slices to the axial view, seen from the feet with anterior up', () => {
    const axes = sliceAxesOf(axialGrid);
    expect(axes.axial.voxelAxis).toBe(2);
    expect(axes.coronal.voxelAxis).toBe(1);
    expect(axes.sagittal.voxelAxis).toBe(0);
    // Radiological convention (common practice): patient left on the screen's right.
    closeTo(axes.axial.rightLps, [1, 0, 0]);
    closeTo(axes.axial.upLps, [0, -1, 0]);
    closeTo(axes.coronal.rightLps, [1, 0, 0]);
    closeTo(axes.coronal.upLps, [0, 0, 1]);
    // Sagittal seen from the patient's left: anterior on the left, so right points posterior.
    closeTo(axes.sagittal.rightLps, [0, 1, 0]);
    expect(axes.axial.obliquityDeg).toBeCloseTo(0, 9);
  });

  it('gives a coronal acquisition its slices to the coronal view and its rows to the axial view', () => {
    const axes = sliceAxesOf(coronalGrid);
    expect(axes.coronal.voxelAxis).toBe(2);
    expect(axes.axial.voxelAxis).toBe(1);
    expect(axes.sagittal.voxelAxis).toBe(0);
    closeTo(axes.coronal.upLps, [0, 0, 1]);
  });

  it('measures the tilt of an oblique series and keeps screen axes perpendicular', () => {
    const tilt = (12 * Math.PI) / 180;
    const oblique: VolumeGeometry = {
      ...axialGrid,
      direction: [
        [1, 0, 0],
        [0, Math.cos(tilt), Math.sin(tilt)],
        [0, -Math.sin(tilt), Math.cos(tilt)],
      ],
    };
    const axes = sliceAxesOf(oblique);
    expect(axes.axial.voxelAxis).toBe(2);
    expect(axes.axial.obliquityDeg).toBeCloseTo(12, 9);
    expect(axes.sagittal.obliquityDeg).toBeCloseTo(0, 9);
    const { rightLps, upLps, normalLps } = axes.axial;
    expect(rightLps[0] * upLps[0] + rightLps[1] * upLps[1] + rightLps[2] * upLps[2]).toBeCloseTo(
      0,
      12,
    );
    expect(normalLps[2]).toBeGreaterThan(0);
  });

  it('names screen directions by patient letters', () => {
    expect(directionLetters([1, 0, 0])).toBe('L');
    expect(directionLetters([-1, 0, 0])).toBe('R');
    expect(directionLetters([0, -1, 0])).toBe('A');
    expect(directionLetters([0, 0.2, 0.98])).toBe('S');
    expect(directionLetters([0.7, 0, 0.7])).toBe('LS');
  });
});

describe('slice viewport', () => {
  it('maps the view centre of the coronal example to the worked voxel position (−170, 30, 85)', () => {
    // DICOM PS3.3 C.7.6.2.1.1 [C]: coronal IOP, IPP (−250, 30, 120), spacing [0.7, 0.8]: voxel
    // (i 100, j 50) lies at (−170, 30, 85). Centre the coronal view there and click its middle.
    const axes = sliceAxesOf(coronalGrid).coronal;
    const worked = voxelToLps(coronalGrid, [100, 50, 0]);
    closeTo(worked, [-170, 30, 85]);
    const viewport = { widthPx: 400, heightPx: 300, centreLps: worked, mmPerPixel: 0.5 };
    const plane = slicePlanePoint(coronalGrid, axes.voxelAxis, 0);
    closeTo(screenToLps(axes, viewport, plane, 200, 150), [-170, 30, 85]);
    // Ten pixels right is 5 mm towards the patient's left; ten up is 5 mm towards the head.
    closeTo(screenToLps(axes, viewport, plane, 210, 140), [-165, 30, 90]);
  });

  it('puts a click on the shown slice, whatever the depth of the view centre', () => {
    const axes = sliceAxesOf(axialGrid).axial;
    const plane = slicePlanePoint(axialGrid, 2, 10);
    expect(plane[2]).toBeCloseTo(75, 12);
    const viewport = {
      widthPx: 100,
      heightPx: 100,
      centreLps: [0, 0, -400] as [number, number, number],
      mmPerPixel: 1,
    };
    expect(screenToLps(axes, viewport, plane, 50, 50)[2]).toBeCloseTo(75, 12);
    expect(sliceIndexAt(axialGrid, 2, [0, 0, 76.2])).toBe(10);
    expect(sliceIndexAt(axialGrid, 2, [0, 0, 1e6])).toBe(39);
  });

  it('steps whole slices and stops at the last one', () => {
    const start = voxelToLps(axialGrid, [10, 20, 5.4]);
    closeTo(stepSlices(axialGrid, 2, start, 3), voxelToLps(axialGrid, [10, 20, 8]));
    closeTo(stepSlices(axialGrid, 2, start, 100), voxelToLps(axialGrid, [10, 20, 39]));
  });

  it('fits the whole grid into the view', () => {
    const axes = sliceAxesOf(axialGrid).axial;
    const viewport = fittedViewport(axes, axialGrid, 400, 300, 0);
    // 200 columns × 0.8 mm = 160 mm (centres 159.2 mm apart plus one voxel of 2.5 mm at most).
    expect(viewport.mmPerPixel).toBeCloseTo(Math.max((159.2 + 2.5) / 400, (83.3 + 2.5) / 300), 9);
    closeTo(viewport.centreLps, voxelToLps(axialGrid, [99.5, 59.5, 19.5]));
  });
});
