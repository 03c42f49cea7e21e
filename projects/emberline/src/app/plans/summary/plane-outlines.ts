/**
 * What a plan's picture draws on the plane through its needle, in picture millimetres: the
 * outline of each assessed zone (its stored voxel mask, sampled on the plane and contoured by
 * the viewer's marching squares) and the tumour surface samples that lie on the plane. Pure.
 */
import { lpsToVoxel, voxelToLps, type DisplayMargins, type Vec3 } from '@emberline/shared';
import { marchingSquares, type ZoneMask } from '../../imaging/viewer/assessment/zone-contour';
import {
  distanceFromPlaneMm,
  fromPlane,
  toPlane,
  type NeedlePlane,
  type PlanePoint,
} from './needle-plane';

/** A rectangle of the plane, picture mm. */
export interface PlaneWindow {
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
}

/** A tumour surface sample on the plane, with its local margin (mm, negative outside the zone). */
export interface SurfaceMark extends PlanePoint {
  marginMm: number;
}

/** The part of the plane the zone's box covers, picture mm (the box's eight corners, projected). */
export function zoneWindow(zone: ZoneMask, plane: NeedlePlane): PlaneWindow {
  const [nx, ny, nz] = zone.geometry.dimensions;
  const corners: PlanePoint[] = [];
  for (const i of [-0.5, nx - 0.5]) {
    for (const j of [-0.5, ny - 0.5]) {
      for (const k of [-0.5, nz - 0.5]) {
        corners.push(toPlane(plane, voxelToLps(zone.geometry, [i, j, k])));
      }
    }
  }
  return boundsOf(corners);
}

/**
 * The zone's outline where the plane cuts it: closed loops of picture points (mm). The mask is
 * read at the nearest voxel of each sample, `stepMm` apart on the plane, and contoured at half
 * between inside and outside samples, so the outline is good to about half the larger of the
 * step and the voxel size.
 */
export function zoneOutline(zone: ZoneMask, plane: NeedlePlane, stepMm: number): PlanePoint[][] {
  const window = zoneWindow(zone, plane);
  const nu = Math.max(1, Math.ceil((window.maxX - window.minX) / stepMm) + 1);
  const nv = Math.max(1, Math.ceil((window.maxY - window.minY) / stepMm) + 1);
  const [nx, ny, nz] = zone.geometry.dimensions;
  const isInside = (u: number, v: number) => {
    const point = fromPlane(plane, { x: window.minX + u * stepMm, y: window.minY + v * stepMm });
    const [i, j, k] = lpsToVoxel(zone.geometry, point).map(Math.round);
    if (i < 0 || j < 0 || k < 0 || i >= nx || j >= ny || k >= nz) return false;
    return zone.mask[i + nx * (j + ny * k)] !== 0;
  };
  return marchingSquares(nu, nv, isInside).map((loop) =>
    loop.map(([doubledU, doubledV]) => ({
      x: window.minX + (doubledU / 2) * stepMm,
      y: window.minY + (doubledV / 2) * stepMm,
    })),
  );
}

/**
 * The surface samples of a tumour lying within `toleranceMm` of the plane, projected onto it:
 * the tumour's outline on the plane as a ring of points, each with its local margin.
 */
export function surfaceOnPlane(
  margins: DisplayMargins,
  plane: NeedlePlane,
  toleranceMm: number,
): SurfaceMark[] {
  const marks: SurfaceMark[] = [];
  const points = margins.pointsLps;
  for (let index = 0; index * 3 + 2 < points.length; index++) {
    const point: Vec3 = [points[index * 3], points[index * 3 + 1], points[index * 3 + 2]];
    if (Math.abs(distanceFromPlaneMm(plane, point)) > toleranceMm) continue;
    marks.push({ ...toPlane(plane, point), marginMm: margins.marginMm[index] });
  }
  return marks;
}

/** The smallest rectangle holding every point; an empty one at the origin when there is none. */
export function boundsOf(points: readonly PlanePoint[]): PlaneWindow {
  if (!points.length) return { minX: 0, minY: 0, maxX: 0, maxY: 0 };
  return {
    minX: Math.min(...points.map((point) => point.x)),
    minY: Math.min(...points.map((point) => point.y)),
    maxX: Math.max(...points.map((point) => point.x)),
    maxY: Math.max(...points.map((point) => point.y)),
  };
}

/**
 * A square window around what the picture shows, `paddingMm` wider on every side and at least
 * `minimumSpanMm` across, centred on it; the tip (origin) alone when nothing else shows.
 */
export function squareWindow(
  points: readonly PlanePoint[],
  paddingMm: number,
  minimumSpanMm: number,
): PlaneWindow {
  const bounds = boundsOf(points.length ? points : [{ x: 0, y: 0 }]);
  const span = Math.max(
    minimumSpanMm,
    bounds.maxX - bounds.minX + 2 * paddingMm,
    bounds.maxY - bounds.minY + 2 * paddingMm,
  );
  const centreX = (bounds.minX + bounds.maxX) / 2;
  const centreY = (bounds.minY + bounds.maxY) / 2;
  return {
    minX: centreX - span / 2,
    minY: centreY - span / 2,
    maxX: centreX + span / 2,
    maxY: centreY + span / 2,
  };
}

/** A scale bar length for a picture `spanMm` across: 5, 10, 20 or 50 mm, about a quarter of it. */
export function scaleBarMm(spanMm: number): number {
  const wanted = spanMm / 4;
  return [5, 10, 20, 50].reduce((best, candidate) =>
    Math.abs(candidate - wanted) < Math.abs(best - wanted) ? candidate : best,
  );
}
