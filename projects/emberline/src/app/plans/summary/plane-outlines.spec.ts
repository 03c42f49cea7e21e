import { ballDisplay } from '../testing/display-fixtures';
import { needlePlane } from './needle-plane';
import { scaleBarMm, squareWindow, surfaceOnPlane, zoneOutline } from './plane-outlines';

/**
 * A plane cuts a ball of radius R whose centre lies d from it in a circle of radius
 * √(R² − d²) (elementary geometry). The outline is read from a 1 mm voxel mask at the nearest
 * voxel on a 0.5 mm sampling: each point may be off by up to half a voxel diagonal (√3 / 2 mm)
 * and half a step, hence 1.2 mm.
 */
const toleranceMm = 1.2;

describe('zoneOutline', () => {
  it('outlines a ball zone cut through its centre as a circle of its radius', () => {
    const display = ballDisplay([0, 0, 0], 15, 9);
    const plane = needlePlane([0, -60, 0], [0, 0, 0]);
    const loops = zoneOutline(display.zones[0], plane, 0.5);
    expect(loops).toHaveLength(1);
    expect(loops[0].length).toBeGreaterThan(20);
    for (const point of loops[0]) {
      expect(Math.abs(Math.hypot(point.x, point.y) - 15)).toBeLessThan(toleranceMm);
    }
  });

  it('outlines the smaller circle of a plane 9 mm off the centre: √(15² − 9²) = 12 mm', () => {
    const display = ballDisplay([0, 0, 9], 15, 9);
    const plane = needlePlane([0, -60, 0], [0, 0, 0]);
    const loops = zoneOutline(display.zones[0], plane, 0.5);
    expect(loops).toHaveLength(1);
    for (const point of loops[0]) {
      expect(Math.abs(Math.hypot(point.x, point.y) - 12)).toBeLessThan(toleranceMm);
    }
  });

  it('draws nothing when the plane misses the zone', () => {
    const display = ballDisplay([0, 0, 40], 15, 9);
    expect(zoneOutline(display.zones[0], needlePlane([0, -60, 0], [0, 0, 0]), 0.5)).toEqual([]);
  });
});

describe('surfaceOnPlane', () => {
  it('keeps the tumour surface points near the plane, on the tumour’s circle, with their margins', () => {
    const display = ballDisplay([0, 0, 0], 15, 9);
    const plane = needlePlane([0, -60, 0], [0, 0, 0]);
    const marks = surfaceOnPlane(display.margins[0], plane, 0.5);
    expect(marks.length).toBeGreaterThan(10);
    // Points within 0.5 mm of a great circle of a 9 mm ball lie √(81 − 0.25) to 9 mm out.
    for (const mark of marks) {
      const radius = Math.hypot(mark.x, mark.y);
      expect(radius).toBeGreaterThanOrEqual(Math.sqrt(81 - 0.25) - 1e-4);
      expect(radius).toBeLessThanOrEqual(9 + 1e-4);
      expect(mark.marginMm).toBeCloseTo(6, 5);
    }
    expect(marks.length).toBeLessThan(display.margins[0].marginMm.length / 5);
  });
});

describe('squareWindow and scaleBarMm', () => {
  it('centres a square on what it shows, padded, never narrower than asked', () => {
    expect(
      squareWindow(
        [
          { x: -10, y: 0 },
          { x: 30, y: 10 },
        ],
        5,
        20,
      ),
    ).toEqual({ minX: -15, minY: -20, maxX: 35, maxY: 30 });
    expect(squareWindow([], 5, 40)).toEqual({ minX: -20, minY: -20, maxX: 20, maxY: 20 });
  });

  it('picks a round bar about a quarter of the picture', () => {
    expect(scaleBarMm(40)).toBe(10);
    expect(scaleBarMm(60)).toBe(10);
    expect(scaleBarMm(90)).toBe(20);
    expect(scaleBarMm(250)).toBe(50);
  });
});
