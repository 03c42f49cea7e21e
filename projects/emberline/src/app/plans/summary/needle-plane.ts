import { vector3, type Vec3 } from '@emberline/shared';
import { directionLetters } from '../../imaging/viewer/slice-axes';

/**
 * The plane a plan's picture shows: it holds the needle's axis, and it is the plane through
 * that axis closest to the axial one (its second direction lies in the axial plane), so that
 * a needle in the axial plane is shown on the axial slice a CT reader knows. Screen axes follow
 * the radiological habit for an axial slice (patient's left on the right, posterior down);
 * a plane tilted towards coronal keeps its inferior side down.
 */
export interface NeedlePlane {
  /** The needle's tip (its target), LPS mm: the picture's origin. */
  originLps: Vec3;
  /** Unit vector of the picture's +x (rightwards), LPS. */
  rightLps: Vec3;
  /** Unit vector of the picture's +y (downwards), LPS. */
  downLps: Vec3;
  /** Unit normal of the plane, LPS. */
  normalLps: Vec3;
  /** Angle between this plane and the axial plane, degrees (0: the axial slice). */
  tiltFromAxialDeg: number;
}

/** A point of the plane in picture millimetres: x rightwards, y downwards from the tip. */
export interface PlanePoint {
  x: number;
  y: number;
}

const left: Vec3 = [1, 0, 0];
const posterior: Vec3 = [0, 1, 0];
const superior: Vec3 = [0, 0, 1];

/** The plane through the needle from `entryLps` to `targetLps` (LPS mm), as described above. */
export function needlePlane(entryLps: Readonly<Vec3>, targetLps: Readonly<Vec3>): NeedlePlane {
  const along = vector3.normalize(vector3.subtract(targetLps, entryLps));
  // The direction across the needle within the axial plane; a needle along the body's long
  // axis has none, and its plane is then taken through the left-right axis (coronal).
  let across = vector3.cross(superior, along);
  if (vector3.norm(across) < 0.05) across = vector3.cross(posterior, along);
  const normal = vector3.normalize(vector3.cross(along, vector3.normalize(across)));
  const right = inPlane(normal, [left, posterior]);
  let down = vector3.normalize(vector3.cross(normal, right));
  // Down is posterior on an axial-like plane and inferior on an upright one.
  if (vector3.dot(down, [0, 1, -1]) < 0) down = vector3.scale(down, -1);
  const tiltFromAxialDeg = (Math.acos(Math.min(1, Math.abs(normal[2]))) * 180) / Math.PI;
  return {
    originLps: [targetLps[0], targetLps[1], targetLps[2]],
    rightLps: right,
    downLps: down,
    normalLps: normal,
    tiltFromAxialDeg,
  };
}

/** The first of `candidates` (LPS unit vectors) that the plane does not face, laid into it. */
function inPlane(normal: Vec3, candidates: readonly Vec3[]): Vec3 {
  for (const candidate of candidates) {
    const laid = vector3.addScaled(candidate, normal, -vector3.dot(candidate, normal));
    if (vector3.norm(laid) > 0.3) return vector3.normalize(laid);
  }
  return vector3.normalize(vector3.addScaled(superior, normal, -vector3.dot(superior, normal)));
}

/** Where a point (LPS mm) falls on the plane, picture mm. */
export function toPlane(plane: NeedlePlane, pointLps: Readonly<Vec3>): PlanePoint {
  const offset = vector3.subtract(pointLps, plane.originLps);
  return { x: vector3.dot(offset, plane.rightLps), y: vector3.dot(offset, plane.downLps) };
}

/** The LPS point of a picture position (mm). */
export function fromPlane(plane: NeedlePlane, point: PlanePoint): Vec3 {
  return vector3.addScaled(
    vector3.addScaled(plane.originLps, plane.rightLps, point.x),
    plane.downLps,
    point.y,
  );
}

/** Signed distance of a point (LPS mm) from the plane along its normal, mm. */
export function distanceFromPlaneMm(plane: NeedlePlane, pointLps: Readonly<Vec3>): number {
  return vector3.dot(vector3.subtract(pointLps, plane.originLps), plane.normalLps);
}

/** The patient-direction letters at the four edges of a picture of the plane (as the viewer's). */
export function edgeLetters(plane: NeedlePlane): {
  top: string;
  right: string;
  bottom: string;
  left: string;
} {
  return {
    top: directionLetters(vector3.scale(plane.downLps, -1)),
    right: directionLetters(plane.rightLps),
    bottom: directionLetters(plane.downLps),
    left: directionLetters(vector3.scale(plane.rightLps, -1)),
  };
}
