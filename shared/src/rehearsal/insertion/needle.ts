/**
 * The needle of the insertion rehearsal: a rigid straight shaft held by its base (README,
 * "Needle").
 *
 * Pose: the base's position (3), the shaft's unit direction (2 degrees of freedom) and a roll
 * about it (1) — 6 in all; the tip is base + depth·direction. Before the capsule gives way the
 * tip pushes the surface (a unilateral contact at the nearest surface point, capped at the
 * puncture force). Once punctured, points of tissue are embedded where the shaft passes them and
 * held on its line by two bilateral rows across the shaft each, and slide along it against
 * Coulomb friction (a third row, |λ| ≤ μ·|λ_normal|).
 *
 * The rows are built from a pose and the free motion without changing the needle; `commit`
 * takes the step's outcome (puncture, new points, sliding) once the step is kept.
 */
import { cross, type Vec3 } from '../../geometry/vector';
import type { TetMesh } from '../mesh/tet-mesh';
import type { ConstraintRow, ConstraintSolution } from './constraints';
import { checkDirection, checkNumber, checkVec3 } from './insertion-input';

/** Where the needle's holder puts it: 6 degrees of freedom. */
export interface NeedlePose {
  /** The base (where the shaft is held), LPS mm. */
  baseMm: Vec3;
  /** Unit vector from the base towards the tip (LPS). */
  direction: Vec3;
  /**
   * Roll about the shaft, rad: turns the frame across the shaft (`needleFrame`). A straight
   * symmetric shaft's constraints do not depend on it; it is kept for a bevelled tip.
   */
  rollRad: number;
}

/** Needle–tissue parameters; defaults and their sources in the README. */
export interface NeedleParameters {
  /** Contact force at which the capsule gives way, N (default 1). */
  punctureForceN: number;
  /** Coulomb's coefficient of friction between shaft and tissue (default 0.3). */
  frictionCoefficient: number;
  /**
   * Spacing of the tissue points embedded along the shaft, mm (default: the mesh's cell). Much
   * closer points fall several into one linear tet, whose rows are then nearly dependent: W
   * becomes near-singular and Gauss–Seidel slow (README).
   */
  sampleSpacingMm: number;
  /** The contact row is added once the tip is this close to the surface, mm (default 0.5). */
  contactMarginMm: number;
}

/** Defaults but for the sample spacing, which is the mesh's cell unless given. */
export const DEFAULT_NEEDLE: Readonly<Omit<NeedleParameters, 'sampleSpacingMm'>> = Object.freeze({
  punctureForceN: 1,
  frictionCoefficient: 0.3,
  contactMarginMm: 0.5,
});

/** Needle parameters with defaults filled in, checked (EngineRefusal otherwise). */
export function resolveNeedle(
  input: Partial<NeedleParameters> | undefined,
  cellMm: number,
): NeedleParameters {
  const p = { ...DEFAULT_NEEDLE, sampleSpacingMm: cellMm, ...(input ?? {}) };
  checkNumber(p.punctureForceN, 'needle.punctureForceN', 0, 1000);
  checkNumber(p.frictionCoefficient, 'needle.frictionCoefficient', 0, 10);
  checkNumber(p.sampleSpacingMm, 'needle.sampleSpacingMm', 0.1, 100);
  checkNumber(p.contactMarginMm, 'needle.contactMarginMm', 0, 100);
  return p;
}

/** A pose with its direction normalised, checked. */
export function checkPose(pose: NeedlePose, field = 'pose'): NeedlePose {
  if (pose === null || typeof pose !== 'object') {
    checkVec3(undefined, `${field}.baseMm`);
  }
  return {
    baseMm: checkVec3(pose.baseMm, `${field}.baseMm`),
    direction: checkDirection(pose.direction, `${field}.direction`),
    rollRad: checkNumber(pose.rollRad ?? 0, `${field}.rollRad`, -1e6, 1e6),
  };
}

/** The tip at insertion depth `depthMm`: base + depth·direction, LPS mm. */
export function needleTipMm(pose: NeedlePose, depthMm: number): Vec3 {
  return [
    pose.baseMm[0] + depthMm * pose.direction[0],
    pose.baseMm[1] + depthMm * pose.direction[1],
    pose.baseMm[2] + depthMm * pose.direction[2],
  ];
}

/**
 * The shaft's frame: its axis and two unit vectors across it, right-handed
 * (across1 × across2 = axis). At roll 0, across1 is horizontal in the LPS frame (axis × S,
 * or L when the shaft is vertical); roll turns both about the axis.
 */
export function needleFrame(pose: Pick<NeedlePose, 'direction' | 'rollRad'>): {
  axis: Vec3;
  across1: Vec3;
  across2: Vec3;
} {
  const axis = pose.direction;
  let reference = cross(axis, [0, 0, 1]);
  let length = Math.hypot(...reference);
  if (length < 1e-6) {
    reference = cross(axis, [1, 0, 0]);
    length = Math.hypot(...reference);
  }
  const e1: Vec3 = [reference[0] / length, reference[1] / length, reference[2] / length];
  const e2 = cross(axis, e1);
  const c = Math.cos(pose.rollRad);
  const s = Math.sin(pose.rollRad);
  const across1: Vec3 = [c * e1[0] + s * e2[0], c * e1[1] + s * e2[1], c * e1[2] + s * e2[2]];
  const across2 = cross(axis, across1);
  return { axis, across1, across2 };
}

/**
 * A pose from 6 numbers: base (mm), the direction's azimuth in the axial (x–y) plane from +x
 * and elevation towards +z (rad), and roll (rad).
 */
export function poseFromDegreesOfFreedom(
  dof: readonly [number, number, number, number, number, number],
): NeedlePose {
  const [x, y, z, azimuth, elevation, roll] = dof;
  return {
    baseMm: [x, y, z],
    direction: [
      Math.cos(elevation) * Math.cos(azimuth),
      Math.cos(elevation) * Math.sin(azimuth),
      Math.sin(elevation),
    ],
    rollRad: roll,
  };
}

/** The 6 numbers of a pose (inverse of poseFromDegreesOfFreedom). */
export function degreesOfFreedomOfPose(
  pose: NeedlePose,
): [number, number, number, number, number, number] {
  const [dx, dy, dz] = pose.direction;
  return [
    pose.baseMm[0],
    pose.baseMm[1],
    pose.baseMm[2],
    Math.atan2(dy, dx),
    Math.atan2(dz, Math.hypot(dx, dy)),
    pose.rollRad,
  ];
}

/** A point of tissue held on the shaft. */
export interface ShaftPoint {
  nodes: [number, number, number, number];
  weights: [number, number, number, number];
  /**
   * Axial position relative to the tip when last committed, m (≤ 0: behind the tip). Sticking
   * keeps it; sliding changes it.
   */
  offsetFromTipM: number;
  /**
   * The impulse the shaft gave this point in the last step, N·s, in the solver's frame (the sum
   * of its rows' λ·u): the next step's preload and first guess.
   */
  impulseNs: Vec3;
}

/** The nearest point of the deformed surface to a point. */
export interface SurfacePoint {
  nodes: [number, number, number, number];
  weights: [number, number, number, number];
  /** Outward unit normal of the triangle it lies on. */
  normal: Vec3;
  /** Position, m. */
  pointM: Vec3;
}

/** Where the rows of a step came from: the needle's command and which row is what. */
export interface NeedleRows {
  rows: ConstraintRow[];
  pose: NeedlePose;
  depthMm: number;
  /** Index of the contact row, or −1. */
  contactRow: number;
  /** The surface point of the contact row, if any. */
  contact: SurfacePoint | null;
  /** Rows of shaft point j start at shaftRowStart + 3·j (across1, across2, along). */
  shaftRowStart: number;
}

/** What a committed step did to the needle. */
export interface NeedleStepReport {
  /** 'approach' (no contact), 'contact' (pushing the capsule), 'punctured'. */
  phase: 'approach' | 'contact' | 'punctured';
  /** The capsule gave way in this step. */
  puncturedNow: boolean;
  /** The contact force of the step, N (0 without contact). */
  contactForceN: number;
  /** Force of the tissue on the needle, N (LPS), and its part along the shaft (+ = pushing back). */
  forceOnNeedleN: Vec3;
  axialForceN: number;
  /** Shaft points now held, and how many slid (|friction impulse| at its bound) this step. */
  shaftPoints: number;
  slidingPoints: number;
}

/**
 * The needle's interaction state with one mesh. Positions handed in are the tissue solver's
 * (metres); poses and depths are LPS millimetres.
 */
export class Needle {
  readonly parameters: NeedleParameters;
  /** Whether the capsule has been punctured (it stays so: the hole remains). */
  punctured = false;
  /** Depth at which it was punctured, mm (NaN before). */
  punctureDepthMm = Number.NaN;
  /** Tissue points held on the shaft. */
  points: ShaftPoint[] = [];
  private lastSampleDepthMm = Number.NaN;
  private readonly boxes: Float64Array;

  constructor(
    private readonly mesh: TetMesh,
    parameters?: Partial<NeedleParameters>,
  ) {
    this.parameters = resolveNeedle(parameters, mesh.cellMm);
    this.boxes = new Float64Array(6 * (mesh.tets.length / 4));
  }

  /**
   * The constraint rows for the step ending with the needle at (pose, depthMm), against the
   * free-motion positions `positionsM` (m) and step h (s). Changes nothing. With `preloaded`,
   * the free motion carried the last step's shaft impulses as forces (`addPreloadForces`) and
   * the rows say so (their `preloadImpulseNs`).
   */
  buildRows(
    positionsM: Float64Array,
    pose: NeedlePose,
    depthMm: number,
    h: number,
    preloaded = false,
  ): NeedleRows {
    const { axis, across1, across2 } = needleFrame(pose);
    const baseM = pose.baseMm.map((v) => v / 1000) as Vec3;
    const depthM = depthMm / 1000;
    const rows: ConstraintRow[] = [];
    let contactRow = -1;
    let contact: SurfacePoint | null = null;
    if (!this.punctured) {
      const tipM: Vec3 = [
        baseM[0] + depthM * axis[0],
        baseM[1] + depthM * axis[1],
        baseM[2] + depthM * axis[2],
      ];
      contact = nearestSurfacePoint(this.mesh, positionsM, tipM);
      if (contact) {
        const n = contact.normal;
        const gap =
          n[0] * (tipM[0] - contact.pointM[0]) +
          n[1] * (tipM[1] - contact.pointM[1]) +
          n[2] * (tipM[2] - contact.pointM[2]);
        if (gap <= this.parameters.contactMarginMm / 1000) {
          // c = n·(tip − q) ≥ 0: the surface point stays in front of the tip; its impulse
          // pushes the point along −n (into the organ), at most the puncture force for a step.
          contactRow = rows.length;
          rows.push({
            kind: 'contact',
            nodes: contact.nodes,
            weights: contact.weights,
            direction: [-n[0], -n[1], -n[2]],
            violationM: gap,
            maxImpulseNs: this.parameters.punctureForceN * h,
          });
        } else {
          contact = null;
        }
      }
    }
    const shaftRowStart = rows.length;
    for (const point of this.points) {
      const q = embeddedPoint(positionsM, point.nodes, point.weights);
      const rel: Vec3 = [q[0] - baseM[0], q[1] - baseM[1], q[2] - baseM[2]];
      const first = rows.length;
      // The last impulse in the new frame (exact: the three directions are orthonormal).
      for (const direction of [across1, across2]) {
        const guess = dot3(point.impulseNs, direction);
        rows.push({
          kind: 'bilateral',
          nodes: point.nodes,
          weights: point.weights,
          direction,
          violationM: dot3(direction, rel),
          initialImpulseNs: guess,
          preloadImpulseNs: preloaded ? guess : 0,
        });
      }
      const guess = dot3(point.impulseNs, axis);
      // Sticking keeps the point's place on the shaft: axial position = depth + offset.
      rows.push({
        kind: 'friction',
        nodes: point.nodes,
        weights: point.weights,
        direction: axis,
        violationM: dot3(axis, rel) - (depthM + point.offsetFromTipM),
        normalRows: [first, first + 1],
        frictionCoefficient: this.parameters.frictionCoefficient,
        initialImpulseNs: guess,
        preloadImpulseNs: preloaded ? guess : 0,
      });
    }
    return { rows, pose, depthMm, contactRow, contact, shaftRowStart };
  }

  /**
   * Takes a kept step: `positionsM` are the corrected positions (m), `built` the rows the step
   * was solved with and `solution` their solution. Punctures the capsule if the contact reached
   * its cap, updates the shaft points' places (sliding) and drops those past the tip, and embeds
   * new points where the shaft passed.
   */
  commit(
    positionsM: Float64Array,
    built: NeedleRows,
    solution: ConstraintSolution,
    h: number,
  ): NeedleStepReport {
    const { pose, depthMm, rows } = built;
    const { axis } = needleFrame(pose);
    const lambda = solution.impulsesNs;
    const force: Vec3 = [0, 0, 0];
    for (let i = 0; i < rows.length; i++) {
      // The tissue gets +λ·u per row; the needle the opposite.
      for (let a = 0; a < 3; a++) force[a] -= (lambda[i] * rows[i].direction[a]) / h;
    }
    let contactForceN = 0;
    let puncturedNow = false;
    if (built.contactRow >= 0 && built.contact) {
      const impulse = lambda[built.contactRow];
      contactForceN = impulse / h;
      const cap = rows[built.contactRow].maxImpulseNs ?? Infinity;
      if (impulse >= cap * (1 - 1e-9) && cap < Infinity) {
        puncturedNow = true;
        this.punctured = true;
        this.punctureDepthMm = depthMm;
        this.lastSampleDepthMm = depthMm;
        // The first point held on the shaft is the capsule's point under the tip.
        this.points.push({
          nodes: [...built.contact.nodes],
          weights: [...built.contact.weights],
          offsetFromTipM: 0,
          impulseNs: [0, 0, 0],
        });
      }
    }
    const baseM = pose.baseMm.map((v) => v / 1000) as Vec3;
    const depthM = depthMm / 1000;
    let sliding = 0;
    const kept: ShaftPoint[] = [];
    for (let j = 0; j < this.points.length; j++) {
      const point = this.points[j];
      const q = embeddedPoint(positionsM, point.nodes, point.weights);
      point.offsetFromTipM =
        axis[0] * (q[0] - baseM[0]) +
        axis[1] * (q[1] - baseM[1]) +
        axis[2] * (q[2] - baseM[2]) -
        depthM;
      const r = built.shaftRowStart + 3 * j;
      if (j < (rows.length - built.shaftRowStart) / 3) {
        point.impulseNs = [0, 1, 2].map(
          (a) =>
            lambda[r] * rows[r].direction[a] +
            lambda[r + 1] * rows[r + 1].direction[a] +
            lambda[r + 2] * rows[r + 2].direction[a],
        ) as Vec3;
        const bound = this.parameters.frictionCoefficient * Math.hypot(lambda[r], lambda[r + 1]);
        if (bound > 0 && Math.abs(lambda[r + 2]) >= bound * (1 - 1e-6)) sliding++;
      }
      // A point past the tip is no longer on the shaft (the needle was drawn back).
      if (point.offsetFromTipM <= 1e-9) kept.push(point);
    }
    this.points = kept;
    if (this.punctured && !puncturedNow) {
      if (depthMm < this.lastSampleDepthMm) this.lastSampleDepthMm = depthMm;
      const spacing = this.parameters.sampleSpacingMm;
      while (this.lastSampleDepthMm + spacing <= depthMm + 1e-9) {
        this.lastSampleDepthMm += spacing;
        const at = this.lastSampleDepthMm / 1000;
        const pointM: Vec3 = [
          baseM[0] + at * axis[0],
          baseM[1] + at * axis[1],
          baseM[2] + at * axis[2],
        ];
        const found = this.locate(positionsM, pointM);
        if (found) {
          this.points.push({ ...found, offsetFromTipM: at - depthM, impulseNs: [0, 0, 0] });
        }
      }
    }
    return {
      phase: this.punctured ? 'punctured' : built.contactRow >= 0 ? 'contact' : 'approach',
      puncturedNow,
      contactForceN,
      forceOnNeedleN: force,
      axialForceN: -dot3(force, axis),
      shaftPoints: this.points.length,
      slidingPoints: sliding,
    };
  }

  /**
   * Adds the last step's shaft impulses as nodal forces (Σ impulse·w/h, N) to `forcesN` (3 per
   * node): with them in the free motion, the next rows (built `preloaded`) only solve for what
   * changed.
   */
  addPreloadForces(forcesN: Float64Array, h: number): void {
    for (const point of this.points) {
      for (let c = 0; c < 4; c++) {
        const w = point.weights[c] / h;
        if (w === 0) continue;
        const base = 3 * point.nodes[c];
        for (let a = 0; a < 3; a++) forcesN[base + a] += w * point.impulseNs[a];
      }
    }
  }

  /**
   * Holds the tissue at `pointMm` (LPS mm, in the deformed mesh at `positionsM`) on the shaft of
   * a needle at (pose, depthMm), as if the shaft had passed it: for a needle already in place at
   * the start of a run, or for tests. Marks the capsule punctured. Returns false if the point
   * lies outside the mesh.
   */
  holdPoint(positionsM: Float64Array, pose: NeedlePose, depthMm: number, pointMm: Vec3): boolean {
    const found = this.locate(positionsM, [
      pointMm[0] / 1000,
      pointMm[1] / 1000,
      pointMm[2] / 1000,
    ]);
    if (!found) return false;
    const along =
      (pointMm[0] - pose.baseMm[0]) * pose.direction[0] +
      (pointMm[1] - pose.baseMm[1]) * pose.direction[1] +
      (pointMm[2] - pose.baseMm[2]) * pose.direction[2];
    if (!this.punctured) {
      this.punctured = true;
      this.punctureDepthMm = depthMm;
      this.lastSampleDepthMm = depthMm;
    }
    this.points.push({ ...found, offsetFromTipM: (along - depthMm) / 1000, impulseNs: [0, 0, 0] });
    return true;
  }

  /** The tet of the deformed mesh holding a point (m) and its weights, or null outside. */
  locate(
    positionsM: Float64Array,
    pointM: Vec3,
  ): { nodes: [number, number, number, number]; weights: [number, number, number, number] } | null {
    const tets = this.mesh.tets;
    const boxes = this.boxes;
    const tetCount = tets.length / 4;
    for (let tet = 0; tet < tetCount; tet++) {
      let lo0 = Infinity;
      let lo1 = Infinity;
      let lo2 = Infinity;
      let hi0 = -Infinity;
      let hi1 = -Infinity;
      let hi2 = -Infinity;
      for (let c = 0; c < 4; c++) {
        const p = 3 * tets[4 * tet + c];
        lo0 = Math.min(lo0, positionsM[p]);
        hi0 = Math.max(hi0, positionsM[p]);
        lo1 = Math.min(lo1, positionsM[p + 1]);
        hi1 = Math.max(hi1, positionsM[p + 1]);
        lo2 = Math.min(lo2, positionsM[p + 2]);
        hi2 = Math.max(hi2, positionsM[p + 2]);
      }
      boxes.set([lo0, lo1, lo2, hi0, hi1, hi2], 6 * tet);
    }
    let best: { tet: number; weights: [number, number, number, number]; depth: number } | null =
      null;
    for (let tet = 0; tet < tetCount; tet++) {
      const o = 6 * tet;
      const slack = 1e-9 * (boxes[o + 3] - boxes[o] + boxes[o + 4] - boxes[o + 1]);
      if (
        pointM[0] < boxes[o] - slack ||
        pointM[0] > boxes[o + 3] + slack ||
        pointM[1] < boxes[o + 1] - slack ||
        pointM[1] > boxes[o + 4] + slack ||
        pointM[2] < boxes[o + 2] - slack ||
        pointM[2] > boxes[o + 5] + slack
      ) {
        continue;
      }
      const weights = barycentric(positionsM, tets, tet, pointM);
      if (!weights) continue;
      const depth = Math.min(...weights);
      if (depth >= -1e-9 && (!best || depth > best.depth)) best = { tet, weights, depth };
    }
    if (!best) return null;
    const clamped = best.weights.map((weight) => Math.max(weight, 0));
    const total = clamped[0] + clamped[1] + clamped[2] + clamped[3];
    return {
      nodes: [
        tets[4 * best.tet],
        tets[4 * best.tet + 1],
        tets[4 * best.tet + 2],
        tets[4 * best.tet + 3],
      ],
      weights: clamped.map((weight) => weight / total) as [number, number, number, number],
    };
  }
}

function dot3(a: Readonly<Vec3>, b: Readonly<Vec3>): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

/** Σ w·x over an embedding's nodes, m. */
export function embeddedPoint(
  positionsM: Float64Array,
  nodes: readonly number[],
  weights: readonly number[],
): Vec3 {
  const out: Vec3 = [0, 0, 0];
  for (let c = 0; c < 4; c++) {
    const w = weights[c];
    if (w === 0) continue;
    const p = 3 * nodes[c];
    out[0] += w * positionsM[p];
    out[1] += w * positionsM[p + 1];
    out[2] += w * positionsM[p + 2];
  }
  return out;
}

/** Barycentric weights of a point in a tet at the given positions, or null for a flat tet. */
function barycentric(
  positionsM: Float64Array,
  tets: Uint32Array,
  tet: number,
  pointM: Vec3,
): [number, number, number, number] | null {
  const p0 = 3 * tets[4 * tet];
  const e: number[][] = [1, 2, 3].map((c) => {
    const p = 3 * tets[4 * tet + c];
    return [0, 1, 2].map((a) => positionsM[p + a] - positionsM[p0 + a]);
  });
  const r = [0, 1, 2].map((a) => pointM[a] - positionsM[p0 + a]);
  // Solve [e1 e2 e3]·(w1, w2, w3) = r by Cramer's rule.
  const det = (a: number[], b: number[], c: number[]): number =>
    a[0] * (b[1] * c[2] - b[2] * c[1]) -
    b[0] * (a[1] * c[2] - a[2] * c[1]) +
    c[0] * (a[1] * b[2] - a[2] * b[1]);
  const d = det(e[0], e[1], e[2]);
  if (!(Math.abs(d) > 0)) return null;
  const w1 = det(r, e[1], e[2]) / d;
  const w2 = det(e[0], r, e[2]) / d;
  const w3 = det(e[0], e[1], r) / d;
  return [1 - w1 - w2 - w3, w1, w2, w3];
}

/**
 * The point of the deformed boundary (positions in m) nearest to pointM, with the outward
 * normal of its triangle; null for a mesh without boundary faces. Closest point on a triangle
 * by the region tests of Ericson, Real-Time Collision Detection, 2005, §5.1.5.
 */
export function nearestSurfacePoint(
  mesh: TetMesh,
  positionsM: Float64Array,
  pointM: Vec3,
): SurfacePoint | null {
  const faces = mesh.boundaryFaces;
  let best: SurfacePoint | null = null;
  let bestSquared = Infinity;
  for (let face = 0; face < faces.length / 3; face++) {
    const ia = faces[3 * face];
    const ib = faces[3 * face + 1];
    const ic = faces[3 * face + 2];
    const a: Vec3 = [positionsM[3 * ia], positionsM[3 * ia + 1], positionsM[3 * ia + 2]];
    const b: Vec3 = [positionsM[3 * ib], positionsM[3 * ib + 1], positionsM[3 * ib + 2]];
    const c: Vec3 = [positionsM[3 * ic], positionsM[3 * ic + 1], positionsM[3 * ic + 2]];
    const [u, v, w] = closestOnTriangle(pointM, a, b, c);
    const q: Vec3 = [
      u * a[0] + v * b[0] + w * c[0],
      u * a[1] + v * b[1] + w * c[1],
      u * a[2] + v * b[2] + w * c[2],
    ];
    const squared = (pointM[0] - q[0]) ** 2 + (pointM[1] - q[1]) ** 2 + (pointM[2] - q[2]) ** 2;
    if (squared >= bestSquared) continue;
    const n = cross(
      [b[0] - a[0], b[1] - a[1], b[2] - a[2]],
      [c[0] - a[0], c[1] - a[1], c[2] - a[2]],
    );
    const length = Math.hypot(n[0], n[1], n[2]);
    if (!(length > 0)) continue;
    bestSquared = squared;
    best = {
      nodes: [ia, ib, ic, ia],
      weights: [u, v, w, 0],
      normal: [n[0] / length, n[1] / length, n[2] / length],
      pointM: q,
    };
  }
  return best;
}

/** Barycentric (u, v, w) of the point of triangle abc closest to p (Ericson 2005, §5.1.5). */
function closestOnTriangle(p: Vec3, a: Vec3, b: Vec3, c: Vec3): [number, number, number] {
  const ab: Vec3 = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
  const ac: Vec3 = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
  const ap: Vec3 = [p[0] - a[0], p[1] - a[1], p[2] - a[2]];
  const d1 = dot3(ab, ap);
  const d2 = dot3(ac, ap);
  if (d1 <= 0 && d2 <= 0) return [1, 0, 0];
  const bp: Vec3 = [p[0] - b[0], p[1] - b[1], p[2] - b[2]];
  const d3 = dot3(ab, bp);
  const d4 = dot3(ac, bp);
  if (d3 >= 0 && d4 <= d3) return [0, 1, 0];
  const vc = d1 * d4 - d3 * d2;
  if (vc <= 0 && d1 >= 0 && d3 <= 0) {
    const t = d1 / (d1 - d3);
    return [1 - t, t, 0];
  }
  const cp: Vec3 = [p[0] - c[0], p[1] - c[1], p[2] - c[2]];
  const d5 = dot3(ab, cp);
  const d6 = dot3(ac, cp);
  if (d6 >= 0 && d5 <= d6) return [0, 0, 1];
  const vb = d5 * d2 - d1 * d6;
  if (vb <= 0 && d2 >= 0 && d6 <= 0) {
    const t = d2 / (d2 - d6);
    return [1 - t, 0, t];
  }
  const va = d3 * d6 - d5 * d4;
  if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0) {
    const t = (d4 - d3) / (d4 - d3 + (d5 - d6));
    return [0, 1 - t, t];
  }
  const denominator = 1 / (va + vb + vc);
  const v = vb * denominator;
  const w = vc * denominator;
  return [1 - v - w, v, w];
}
