import { vector3, type Vec3 } from '@emberline/shared';
import { distanceFromPlaneMm, edgeLetters, fromPlane, needlePlane, toPlane } from './needle-plane';

const degrees = (radians: number) => (radians * 180) / Math.PI;

describe('needlePlane', () => {
  it('shows a needle lying in the axial plane on the axial slice, left to the right and posterior down', () => {
    const plane = needlePlane([0, -60, 0], [0, 0, 0]);
    expect(Math.abs(plane.normalLps[2])).toBeCloseTo(1, 9);
    expect(plane.tiltFromAxialDeg).toBeCloseTo(0, 9);
    expect(plane.rightLps).toEqual([1, 0, 0]);
    expect(plane.downLps[1]).toBeCloseTo(1, 9);
    // The radiological habit for an axial slice (common practice): R on the left, A on top.
    expect(edgeLetters(plane)).toEqual({ top: 'A', right: 'L', bottom: 'P', left: 'R' });
  });

  it('tilts from axial by the needle’s own elevation when the needle climbs towards the head', () => {
    // The needle runs in the sagittal plane x = −32 (LPS mm), 41.6 mm back and 26.9 mm up. The
    // plane holds it and the left-right axis, so it tilts by the needle's elevation,
    // atan(26.9 / 41.6) (elementary trigonometry).
    const entry: Vec3 = [-32, -50, 0];
    const target: Vec3 = [-32, -8.4, 26.9];
    const plane = needlePlane(entry, target);
    expect(plane.tiltFromAxialDeg).toBeCloseTo(degrees(Math.atan2(26.9, 41.6)), 6);
    expect(distanceFromPlaneMm(plane, entry)).toBeCloseTo(0, 9);
    expect(distanceFromPlaneMm(plane, target)).toBeCloseTo(0, 9);
    expect(plane.rightLps[0]).toBeCloseTo(1, 9);
    // Down is still mostly posterior (the plane is nearer axial than coronal).
    expect(edgeLetters(plane).bottom.startsWith('P')).toBe(true);
  });

  it('keeps the needle in its plane when it runs along the body’s long axis', () => {
    const entry: Vec3 = [10, 5, 80];
    const target: Vec3 = [10, 5, 20];
    const plane = needlePlane(entry, target);
    expect(distanceFromPlaneMm(plane, entry)).toBeCloseTo(0, 9);
    expect(plane.tiltFromAxialDeg).toBeCloseTo(90, 6);
    // An upright plane keeps the feet down.
    expect(edgeLetters(plane).bottom).toBe('I');
  });

  it('gives an orthonormal frame, and a point comes back from the picture where it was', () => {
    const plane = needlePlane([-70, -12, -7], [-31.5, 24.1, -1]);
    const { rightLps, downLps, normalLps } = plane;
    expect(vector3.dot(rightLps, downLps)).toBeCloseTo(0, 9);
    expect(vector3.dot(rightLps, normalLps)).toBeCloseTo(0, 9);
    expect(vector3.norm(downLps)).toBeCloseTo(1, 9);
    const onPlane = fromPlane(plane, { x: 12.5, y: -7.25 });
    const back = toPlane(plane, onPlane);
    expect(back.x).toBeCloseTo(12.5, 9);
    expect(back.y).toBeCloseTo(-7.25, 9);
  });
});
