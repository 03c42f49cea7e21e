/**
 * Pure side of the rehearsal replay: checks a replay from the server before anything is drawn,
 * and turns one of its frames into what the 3D scene takes (the liver surface's points and
 * triangles as vtk.js lays them out, the needle's ends, the target). No vtk.js here, so it is
 * tested without WebGL.
 */
import type { RehearsalFrame, RehearsalReplay, StructureKind } from '@emberline/shared';

export type ReplayMode = RehearsalReplay['mode'];

export const replayModeLabels: Record<ReplayMode, string> = {
  freehand: 'Free-hand',
  assisted: 'Robot-assisted',
};

type Triple = readonly [number, number, number];

/** A replay that cannot be drawn as sent; the message says what is wrong, in words. */
export class ReplayDataError extends Error {
  override readonly name = 'ReplayDataError';
}

/** The surface's layout, the same in every frame of a replay. */
export interface ReplayGeometry {
  nodeCount: number;
  triangleCount: number;
  /** vtk.js cell array: per triangle its size (3) and its three node indices. */
  polys: Uint32Array;
}

/** What the scene shows at one frame, LPS mm. */
export interface FrameShapes {
  /** x y z per surface node, in the order of the triangles' indices. */
  surfacePoints: Float32Array;
  baseMm: Triple;
  tipMm: Triple;
  targetMm: Triple;
  /** The tumours' and vessels' embedded points by kind, x y z per point (empty when absent). */
  structures: { kind: StructureKind; points: Float32Array }[];
}

const isTriple = (value: unknown): value is Triple =>
  Array.isArray(value) && value.length === 3 && value.every(Number.isFinite);

/**
 * Checks a replay end to end (every frame, every triangle) and gives its surface layout; throws
 * a `ReplayDataError` naming the first fault: no frames, a triangle list that is not whole
 * triangles, an index past the surface's nodes, a frame with another number of nodes or a
 * coordinate that is not a number, time running backwards.
 */
export function checkedReplay(replay: RehearsalReplay): ReplayGeometry {
  const name = `The ${replayModeLabels[replay.mode]?.toLowerCase() ?? replay.mode} replay`;
  const fault = (detail: string) => new ReplayDataError(`${name} cannot be drawn: ${detail}`);
  if (!Array.isArray(replay.frames) || replay.frames.length === 0) throw fault('it has no frames.');
  if (!Array.isArray(replay.triangles) || replay.triangles.length === 0) {
    throw fault('it has no surface triangles.');
  }
  if (replay.triangles.length % 3 !== 0) {
    throw fault(`its ${replay.triangles.length} triangle indices are not whole triangles.`);
  }
  const first = replay.frames[0].surfaceMm;
  if (!Array.isArray(first) || first.length === 0 || first.length % 3 !== 0) {
    throw fault('frame 1 does not give x, y and z for each surface node.');
  }
  const nodeCount = first.length / 3;
  replay.frames.forEach((frame, index) => checkFrame(frame, index, nodeCount, fault));
  for (let index = 1; index < replay.frames.length; index++) {
    if (replay.frames[index].timeS < replay.frames[index - 1].timeS) {
      throw fault(`frame ${index + 1} comes before frame ${index} in time.`);
    }
  }
  const triangleCount = replay.triangles.length / 3;
  const polys = new Uint32Array(triangleCount * 4);
  for (let triangle = 0; triangle < triangleCount; triangle++) {
    polys[triangle * 4] = 3;
    for (let corner = 0; corner < 3; corner++) {
      const node = replay.triangles[triangle * 3 + corner];
      if (!Number.isInteger(node) || node < 0 || node >= nodeCount) {
        throw fault(
          `triangle ${triangle + 1} names node ${node}, but the surface has ${nodeCount} nodes ` +
            `(0 to ${nodeCount - 1}).`,
        );
      }
      polys[triangle * 4 + 1 + corner] = node;
    }
  }
  return { nodeCount, triangleCount, polys };
}

function checkFrame(
  frame: RehearsalFrame,
  index: number,
  nodeCount: number,
  fault: (detail: string) => ReplayDataError,
): void {
  const label = `frame ${index + 1}`;
  if (!Number.isFinite(frame.timeS) || !Number.isFinite(frame.depthMm)) {
    throw fault(`${label} has no time or depth.`);
  }
  if (!Array.isArray(frame.surfaceMm) || frame.surfaceMm.length !== nodeCount * 3) {
    throw fault(
      `${label} gives ${frame.surfaceMm?.length ?? 0} coordinates for ${nodeCount} surface ` +
        `nodes (${nodeCount * 3} expected).`,
    );
  }
  if (!frame.surfaceMm.every(Number.isFinite)) {
    throw fault(`${label} has a surface coordinate that is not a number.`);
  }
  for (const key of ['baseMm', 'tipMm', 'targetMm'] as const) {
    if (!isTriple(frame[key])) throw fault(`${label} has no ${pointNames[key]} position.`);
  }
}

const pointNames = { baseMm: 'needle base', tipMm: 'needle tip', targetMm: 'target' } as const;

/** The scene's content at one frame (index clamped to the replay). */
export function frameShapes(replay: RehearsalReplay, index: number): FrameShapes {
  const frame = replay.frames[clampIndex(index, replay.frames.length)];
  return {
    surfacePoints: Float32Array.from(frame.surfaceMm),
    baseMm: frame.baseMm,
    tipMm: frame.tipMm,
    targetMm: frame.targetMm,
    structures: (frame.structures ?? [])
      .filter((group) => group.pointsMm.length % 3 === 0 && group.pointsMm.every(Number.isFinite))
      .map((group) => ({ kind: group.kind, points: Float32Array.from(group.pointsMm) })),
  };
}

export function clampIndex(index: number, count: number): number {
  if (count <= 0) return 0;
  return Math.min(count - 1, Math.max(0, Math.round(Number.isFinite(index) ? index : 0)));
}

/** The frame's time and depth: "t = 1.20 s · depth 42.0 mm". */
export function frameReadout(frame: RehearsalFrame): string {
  return `t = ${frame.timeS.toFixed(2)} s · depth ${frame.depthMm.toFixed(1)} mm`;
}

/** Distance from the needle's tip to the target at that moment, mm. */
export function tipToTargetMm(frame: RehearsalFrame): number {
  const [dx, dy, dz] = [0, 1, 2].map((axis) => frame.tipMm[axis] - frame.targetMm[axis]);
  return Math.hypot(dx, dy, dz);
}

/** The frame whose time is nearest `timeS` (the earlier on a tie): where a mode switch lands. */
export function nearestFrameIndex(frames: readonly RehearsalFrame[], timeS: number): number {
  let best = 0;
  for (let index = 1; index < frames.length; index++) {
    if (Math.abs(frames[index].timeS - timeS) < Math.abs(frames[best].timeS - timeS)) best = index;
  }
  return best;
}

/**
 * Where the camera looks from, as a unit vector from the scene's centre towards it (LPS): from
 * the front (anterior), turned so that it looks across the needle rather than along it; a
 * needle within about 25° of front-to-back is seen from the patient's left instead. A needle
 * seen end-on would show as a dot.
 */
export function cameraDirection(baseMm: Triple, tipMm: Triple): [number, number, number] {
  const axis = [0, 1, 2].map((index) => tipMm[index] - baseMm[index]);
  const length = Math.hypot(axis[0], axis[1], axis[2]);
  const across = (view: readonly number[]): number[] => {
    if (length === 0) return [...view];
    const along = (view[0] * axis[0] + view[1] * axis[1] + view[2] * axis[2]) / length ** 2;
    return view.map((value, index) => value - along * axis[index]);
  };
  let direction = across([0, -1, 0]);
  if (Math.hypot(direction[0], direction[1], direction[2]) < 0.42) direction = across([1, 0, 0]);
  const norm = Math.hypot(direction[0], direction[1], direction[2]);
  return [direction[0] / norm, direction[1] / norm, direction[2] / norm];
}
