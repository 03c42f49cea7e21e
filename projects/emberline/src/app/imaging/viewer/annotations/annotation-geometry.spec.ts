import type { Vec3, VolumeGeometry } from '@emberline/shared';
import { sliceAxesOf } from '../slice-axes';
import { slicePlanePoint, type SliceViewport } from '../slice-viewport';
import {
  annotationsOnSlice,
  depthFromPlane,
  isNearPlane,
  lineOnSlice,
  maximumLabelCharacters,
  shortened,
  type DrawableAnnotation,
} from './annotation-geometry';

/*
 * Worked examples by hand. The distance of a point p from the plane through p0 with unit
 * normal n is n · (p − p0) (analytic geometry); a segment a→b meets the plane where that
 * distance, linear in t along it, is zero: t = d(a) / (d(a) − d(b)). A slice of a grid stands
 * for the slab within half its spacing of its plane (common practice for what a slice shows).
 */

// 1 × 1 mm in plane, 2 mm between axial slices; slice 10 lies at z = 20 mm (half thickness 1 mm).
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
// 200 × 200 px at 0.5 mm a pixel, centred on (0, 0): screen x = 100 + 2·L, y = 100 + 2·P
// (axial seen from the feet, anterior up, the patient's right on the screen's left).
const viewport: SliceViewport = {
  widthPx: 200,
  heightPx: 200,
  centreLps: [0, 0, 20],
  mmPerPixel: 0.5,
};
const axialPlane = { pointLps: slicePlanePoint(grid, 2, 10), halfThicknessMm: 1 };

function annotation(
  id: string,
  kind: DrawableAnnotation['kind'],
  points: Vec3[],
  text: string | null = null,
): DrawableAnnotation {
  return { id, kind, points, text };
}

describe('annotation geometry', () => {
  it('measures the distance to the plane along its normal (a tilted plane by hand)', () => {
    // n = (0, 0.6, 0.8) is a unit vector; p − p0 = (5, 3, 4): 0.6·3 + 0.8·4 = 5.0 mm.
    const plane = { pointLps: [0, 0, 0] as Vec3, halfThicknessMm: 2.5 };
    expect(depthFromPlane([5, 3, 4], plane, [0, 0.6, 0.8])).toBeCloseTo(5, 12);
    expect(isNearPlane([5, 3, 4], plane, [0, 0.6, 0.8])).toBe(false);
    // (5, 1, 2): 0.6 + 1.6 = 2.2 mm, within 2.5.
    expect(isNearPlane([5, 1, 2], plane, [0, 0.6, 0.8])).toBe(true);
  });

  it('shows a point within half a slice of the plane, on its boundary too, and not beyond', () => {
    expect(axialPlane.pointLps[2]).toBeCloseTo(20, 12);
    const normal = axes.axial.normalLps;
    expect(isNearPlane([3, 4, 20.8], axialPlane, normal)).toBe(true);
    expect(isNearPlane([3, 4, 19.2], axialPlane, normal)).toBe(true);
    // On the boundary between slices 10 and 11 (z = 21): both show it.
    expect(isNearPlane([3, 4, 21], axialPlane, normal)).toBe(true);
    expect(isNearPlane([3, 4, 21.2], axialPlane, normal)).toBe(false);
    expect(isNearPlane([3, 4, 18.7], axialPlane, normal)).toBe(false);
  });

  it('places the markers of the points near the slice and leaves the others out', () => {
    const drawn = annotationsOnSlice(
      [annotation('near', 'point', [[-20, 10, 20.4]]), annotation('far', 'point', [[-20, 10, 26]])],
      axes.axial,
      viewport,
      axialPlane,
    );
    expect(drawn.map((shape) => shape.id)).toEqual(['near']);
    // L = −20 → x = 100 − 40 = 60; P = 10 → y = 100 + 20 = 120.
    expect(drawn[0].markers).toHaveLength(1);
    expect(drawn[0].markers[0].x).toBeCloseTo(60, 9);
    expect(drawn[0].markers[0].y).toBeCloseTo(120, 9);
  });

  it('projects a line whose ends both lie in the slab, end to end', () => {
    const [shape] = annotationsOnSlice(
      [
        annotation('line', 'line', [
          [-20, 0, 20.5],
          [20, 10, 19.5],
        ]),
      ],
      axes.axial,
      viewport,
      axialPlane,
    );
    expect(lineOnSlice([-20, 0, 20.5], [20, 10, 19.5], axialPlane, axes.axial.normalLps)).toEqual({
      kind: 'in-slab',
    });
    // (−20, 0) → (60, 100); (20, 10) → (140, 120).
    expect(shape.segment?.x1).toBeCloseTo(60, 9);
    expect(shape.segment?.y1).toBeCloseTo(100, 9);
    expect(shape.segment?.x2).toBeCloseTo(140, 9);
    expect(shape.segment?.y2).toBeCloseTo(120, 9);
    expect(shape.markers).toHaveLength(2);
    expect(shape.crossing).toBeNull();
  });

  it('marks where a line passes through the plane when its ends lie off it', () => {
    // z from 14 to 34: depths −6 and +14 mm, t = 6 / 20 = 0.3, L = −20 + 0.3·40 = −8 mm.
    const meeting = lineOnSlice([-20, 0, 14], [20, 0, 34], axialPlane, axes.axial.normalLps);
    expect(meeting.kind).toBe('crossing');
    if (meeting.kind !== 'crossing') return;
    expect(meeting.pointLps[0]).toBeCloseTo(-8, 9);
    expect(meeting.pointLps[2]).toBeCloseTo(20, 9);
    const [shape] = annotationsOnSlice(
      [
        annotation('line', 'line', [
          [-20, 0, 14],
          [20, 0, 34],
        ]),
      ],
      axes.axial,
      viewport,
      axialPlane,
    );
    expect(shape.markers).toEqual([]);
    expect(shape.segment).toBeNull();
    expect(shape.crossing?.x).toBeCloseTo(84, 9);
    expect(shape.crossing?.y).toBeCloseTo(100, 9);
  });

  it('shows only the near end of a line that does not reach the plane, and nothing of one apart', () => {
    const drawn = annotationsOnSlice(
      [
        annotation('one-end', 'line', [
          [0, 0, 20.5],
          [0, 0, 30],
        ]),
        annotation('apart', 'line', [
          [0, 0, 24],
          [10, 0, 40],
        ]),
      ],
      axes.axial,
      viewport,
      axialPlane,
    );
    expect(drawn.map((shape) => shape.id)).toEqual(['one-end']);
    expect(drawn[0].markers).toHaveLength(1);
    expect(drawn[0].segment).toBeNull();
    // Both ends lie on the same side (+0.5 and +10 mm): the line never meets the plane.
    expect(drawn[0].crossing).toBeNull();
  });

  it('shows the same point on the coronal view only within half the coronal spacing', () => {
    // Coronal slices are 1 mm apart (P): half thickness 0.5 mm. Slice 50 lies at P = 0.
    const coronalPlane = { pointLps: slicePlanePoint(grid, 1, 50), halfThicknessMm: 0.5 };
    const centre: SliceViewport = { ...viewport, centreLps: [0, 0, 20] };
    const near = annotationsOnSlice(
      [annotation('a', 'point', [[5, 0.4, 20]])],
      axes.coronal,
      centre,
      coronalPlane,
    );
    const far = annotationsOnSlice(
      [annotation('b', 'point', [[5, 0.6, 20]])],
      axes.coronal,
      centre,
      coronalPlane,
    );
    expect(near).toHaveLength(1);
    expect(far).toHaveLength(0);
  });

  it('labels a note beside its marker, shortened to one line', () => {
    const long = 'Feeding branch\nof the right hepatic artery running close to the lesion';
    const [shape] = annotationsOnSlice(
      [annotation('note', 'note', [[-20, 10, 20]], long)],
      axes.axial,
      viewport,
      axialPlane,
    );
    expect(shape.label?.x).toBeCloseTo(69, 9);
    expect(shape.label?.y).toBeCloseTo(111, 9);
    expect(shape.label?.text).toHaveLength(maximumLabelCharacters);
    expect(shape.label?.text.endsWith('…')).toBe(true);
    expect(shape.label?.text.startsWith('Feeding branch of the right')).toBe(true);
    expect(shortened('Check this')).toBe('Check this');
  });
});
