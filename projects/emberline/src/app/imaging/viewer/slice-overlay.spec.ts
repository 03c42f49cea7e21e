import type { Vec3, VolumeGeometry } from '@emberline/shared';
import { sliceAxesOf } from './slice-axes';
import { clipInfiniteLine, nearestWithin, pathOverlay, planeCutLine } from './slice-overlay';
import { slicePlanePoint, type SliceViewport } from './slice-viewport';

const grid: VolumeGeometry = {
  dimensions: [100, 100, 40],
  spacingMm: [1, 1, 2],
  originLps: [-50, -50, 0],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ],
};
const axes = sliceAxesOf(grid);
const viewport: SliceViewport = {
  widthPx: 200,
  heightPx: 200,
  centreLps: [0, 0, 20],
  mmPerPixel: 0.5,
};

describe('slice overlay', () => {
  it('draws the coronal plane through the cursor as a horizontal line of the axial view', () => {
    const cursor: Vec3 = [10, -20, 20];
    const plane = { pointLps: slicePlanePoint(grid, 2, 10), halfThicknessMm: 1 };
    const line = planeCutLine(axes.axial, viewport, plane, axes.coronal.normalLps, cursor);
    // y = −20 mm (20 mm anterior of the centre) is 40 px above the middle at 0.5 mm a pixel.
    expect(line?.y1).toBeCloseTo(60, 9);
    expect(line?.y2).toBeCloseTo(60, 9);
    expect(Math.min(line?.x1 ?? 0, line?.x2 ?? 0)).toBeCloseTo(0, 9);
    expect(Math.max(line?.x1 ?? 0, line?.x2 ?? 0)).toBeCloseTo(200, 9);
  });

  it('finds no cut between parallel planes, and none for a line missing the view', () => {
    const plane = { pointLps: slicePlanePoint(grid, 2, 10), halfThicknessMm: 1 };
    expect(planeCutLine(axes.axial, viewport, plane, axes.axial.normalLps, [0, 0, 30])).toBeNull();
    expect(clipInfiniteLine({ x: -10, y: 0 }, { x: -10, y: 1 }, 100, 100)).toBeNull();
  });

  it('marks the part of a path within half a slice of the plane and where it pierces it', () => {
    // Plane z = 20 mm (slice 10), half thickness 1 mm; the path rises from z = 10 to z = 30.
    const plane = { pointLps: slicePlanePoint(grid, 2, 10), halfThicknessMm: 1 };
    const overlay = pathOverlay(axes.axial, viewport, plane, [-20, 0, 10], [20, 0, 30]);
    expect(overlay.crossing?.x).toBeCloseTo(100, 9);
    // |z − 20| ≤ 1 between t = 0.45 and 0.55: x from −2 to +2 mm, i.e. 96 to 104 px.
    expect(overlay.inSlab?.x1).toBeCloseTo(96, 9);
    expect(overlay.inSlab?.x2).toBeCloseTo(104, 9);
    expect(overlay.entry.isOnPlane).toBe(false);
    expect(overlay.entry.depthMm).toBeCloseTo(-10, 9);
  });

  it('draws a path lying in the plane solid from end to end', () => {
    const plane = { pointLps: slicePlanePoint(grid, 2, 10), halfThicknessMm: 1 };
    const overlay = pathOverlay(axes.axial, viewport, plane, [-20, 0, 20], [20, 10, 20]);
    expect(overlay.inSlab).toEqual(overlay.projection);
    expect(overlay.target.isOnPlane).toBe(true);
    const away = pathOverlay(axes.axial, viewport, plane, [-20, 0, 25], [20, 10, 25]);
    expect(away.inSlab).toBeNull();
    expect(away.crossing).toBeNull();
  });

  it('picks the nearest handle within the radius', () => {
    const handles = [
      { x: 10, y: 10, name: 'a' },
      { x: 14, y: 10, name: 'b' },
    ];
    expect(nearestWithin(handles, 13, 10, 8)?.name).toBe('b');
    expect(nearestWithin(handles, 40, 40, 8)).toBeNull();
  });
});
