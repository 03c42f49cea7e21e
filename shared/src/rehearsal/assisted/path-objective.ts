/**
 * What the robot-assisted insertion steers for: the tip on the planned path as the tissue moves.
 *
 * The path is a material line: its two ends, where the plan enters the liver (E) and the target
 * (T), are embedded in the mesh (barycentric) and move with the tissue. At insertion depth d of a
 * plan of depth D (start outside the body to target), the tip should be D − d before the target
 * along the path's current direction û = (T − E)/|T − E|:
 *
 *   desired(d) = T − (D − d)·û,   error = tip − desired(d)   (LPS mm),
 *
 * so that at the planned depth the wanted tip is the target itself, and on the way the needle
 * keeps to the line through the moving entry and target. The error has three components; the
 * controller (assisted-controller.ts) drives it to zero with the needle base's six degrees of
 * freedom.
 */
import type { Vec3 } from '../../geometry/vector';
import { embedPoints, type Embedding } from '../mesh/embedding';
import type { TetMesh } from '../mesh/tet-mesh';
import type { ConstraintRow } from '../insertion/constraints';
import { refuse } from '../insertion/insertion-input';
import { needleTipMm, type NeedlePose } from '../insertion/needle';

/** The embedded ends of the planned path and its planned depth. */
export interface PathObjective {
  /** The entry into the organ, embedded a little inside (a point on the surface may miss a tet). */
  entry: Embedding;
  target: Embedding;
  /** |target − start| of the plan, mm. */
  plannedDepthMm: number;
}

/**
 * Embeds the path's ends. The entry is taken a quarter of a cell inside the capsule along the
 * plan (on the surface itself the point can fall just outside every tet).
 */
export function pathObjective(
  mesh: TetMesh,
  plan: { startMm: Vec3; targetMm: Vec3 },
  capsuleEntryMm: Vec3,
): PathObjective {
  const { startMm, targetMm } = plan;
  const plannedDepthMm = Math.hypot(
    targetMm[0] - startMm[0],
    targetMm[1] - startMm[1],
    targetMm[2] - startMm[2],
  );
  if (!(plannedDepthMm > 0)) refuse('plan', 'The plan has no length.');
  const toTarget = Math.hypot(
    targetMm[0] - capsuleEntryMm[0],
    targetMm[1] - capsuleEntryMm[1],
    targetMm[2] - capsuleEntryMm[2],
  );
  const inset = Math.min(mesh.cellMm / 4, toTarget / 2);
  const entryMm = capsuleEntryMm.map(
    (v, a) => v + (inset * (targetMm[a] - startMm[a])) / plannedDepthMm,
  ) as Vec3;
  const [entry, target] = embedPoints(mesh, [entryMm, targetMm]);
  if (!entry) refuse('plan', 'The planned path’s entry into the organ could not be embedded.');
  if (!target) refuse('plan.targetMm', 'The target lies outside the organ mesh.');
  return { entry, target, plannedDepthMm };
}

/** tip − desired(d) for the needle at (pose, depthMm) and the path's ends at entryMm, targetMm. */
export function tipPathErrorMm(
  pose: NeedlePose,
  depthMm: number,
  entryMm: Vec3,
  targetMm: Vec3,
  plannedDepthMm: number,
): Vec3 {
  const tip = needleTipMm(pose, depthMm);
  const u: Vec3 = [targetMm[0] - entryMm[0], targetMm[1] - entryMm[1], targetMm[2] - entryMm[2]];
  const length = Math.hypot(u[0], u[1], u[2]);
  const remaining = plannedDepthMm - depthMm;
  return [0, 1, 2].map(
    (a) => tip[a] - (targetMm[a] - (length > 1e-9 ? (remaining * u[a]) / length : 0)),
  ) as Vec3;
}

/**
 * Observation rows for embedded points: three per point (x, y, z), written like bilateral rows
 * so that the compliance between them and the needle's rows comes from the same table, but never
 * given an impulse ("pseudo-constraints": they read, they do not push).
 */
export function observationRows(mesh: TetMesh, points: readonly Embedding[]): ConstraintRow[] {
  const rows: ConstraintRow[] = [];
  const axes: [number, number, number][] = [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ];
  for (const point of points) {
    const t = 4 * point.tet;
    const nodes: [number, number, number, number] = [
      mesh.tets[t],
      mesh.tets[t + 1],
      mesh.tets[t + 2],
      mesh.tets[t + 3],
    ];
    const weights: [number, number, number, number] = [
      point.weights[0],
      point.weights[1],
      point.weights[2],
      point.weights[3],
    ];
    for (const direction of axes) {
      rows.push({ kind: 'bilateral', nodes, weights, direction, violationM: 0 });
    }
  }
  return rows;
}
