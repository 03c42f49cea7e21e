/**
 * The insertion rehearsal as a stage of the assessment: for each applicator, the liver of the
 * series is meshed (../rehearsal/mesh), breathes (Lujan's model) and takes the needle from the
 * applicator's skin entry to its planned tip twice — free-hand along the planned line, and
 * robot-assisted with the base steered by inverse simulation (../rehearsal/assisted). The result
 * gives the tip errors, the target's motion, the error along the path, and frames for the
 * viewer's replay.
 *
 * > A simulation estimate with textbook and assumed parameters, not a prediction for this
 * > patient; the treating team, local protocols and licensed practice decide.
 */
import type {
  ApplicatorRehearsal,
  RehearsalFrame,
  RehearsalReplay,
  RehearsalStrategy,
} from '../api/assessments';
import type { RehearsalSettings } from '../api/rehearsal-settings';
import type { StructureKind } from '../api/structures';
import { embedPoints, embeddedPosition, type Embedding } from '../rehearsal/mesh/embedding';
import { voxelToLps, type VolumeGeometry } from '../geometry/patient-geometry';
import { distance, type Vec3 } from '../geometry/vector';
import { rehearseFreehandAndAssisted } from '../rehearsal/assisted/rehearse-assisted';
import { RehearsalStopped } from '../rehearsal/insertion/rehearse-freehand';
import type { FreehandOptions, FreehandResult } from '../rehearsal/insertion/rehearse-freehand';
import type { InsertionSimulation } from '../rehearsal/insertion/insertion-simulation';
import type { NeedlePose } from '../rehearsal/insertion/needle';
import { needleTipMm } from '../rehearsal/insertion/needle';
import { buildOrganMesh } from '../rehearsal/mesh/organ-mesh';
import { surfaceNodes } from '../rehearsal/mesh/mesh-faces';
import type { TetMesh } from '../rehearsal/mesh/tet-mesh';
import type { AssessmentApplicator, AssessmentStructure } from './assessment-input';
import { EngineRefusal } from './engine-refusal';
import { monotonicMs } from './assessment-stages';

/** The run's fixed choices (README of the assessment engine, "Insertion rehearsal"). */
const TIME_STEP_S = 0.05;
const SPEED_MM_PER_S = 10;
/** The needle starts at the imaged (planned) phase: mid-exhalation's rest (0.5). */
const START_PHASE = 0.5;
const WARM_UP_CYCLES = 1;
const STRATEGY: RehearsalStrategy = 'pseudo-constraints';
/** Replay frames: one every this many seconds, from this long before the needle moves. */
const FRAME_EVERY_S = 0.2;
const FRAMES_BEFORE_S = 1;

export interface RehearsalStageInput {
  geometry: VolumeGeometry;
  labelMap: Uint8Array | Uint16Array;
  structures: readonly AssessmentStructure[];
  applicators: readonly Pick<AssessmentApplicator, 'entry' | 'target'>[];
  settings: RehearsalSettings;
  /** Wall-clock limit of the whole stage, ms. */
  timeLimitMs: number;
}

export interface RehearsalStageOutput {
  rehearsal: ApplicatorRehearsal[];
  replays: RehearsalReplay[];
  /** Why some or all applicators have no rehearsal, in words. */
  note?: string;
}

/**
 * Rehearses every applicator. `onFraction` hears progress 0–1; `shouldAbort` true throws the
 * caller's abort (checked every step). The time limit ends the stage with a note, keeping the
 * applicators finished.
 */
export function rehearseApplicators(
  input: RehearsalStageInput,
  options: { onFraction?: (fraction: number) => void; shouldAbort?: () => boolean } = {},
): RehearsalStageOutput {
  const started = monotonicMs();
  const organLabels = input.structures
    .filter((structure) => structure.kind === 'liver' || structure.kind === 'tumour')
    .map((structure) => structure.labelValue);
  if (!input.structures.some((structure) => structure.kind === 'liver')) {
    return { rehearsal: [], replays: [], note: 'Not rehearsed: the series has no liver label.' };
  }
  const { mesh, quality } = buildOrganMesh({
    labels: input.labelMap,
    geometry: input.geometry,
    organLabels,
    resolution: input.settings.resolution,
  });
  const surface = surfaceOf(mesh);
  const { tumours, markers } = readStructures(input, mesh);
  const rehearsal: ApplicatorRehearsal[] = [];
  const replays: RehearsalReplay[] = [];
  const skipped: string[] = [];
  const runs = input.applicators.length;
  let runsDone = 0;
  const shouldStop = (): string | null => {
    if (options.shouldAbort?.()) return 'aborted';
    return monotonicMs() - started > input.timeLimitMs ? 'time limit' : null;
  };
  for (const [index, applicator] of input.applicators.entries()) {
    const common: FreehandOptions = {
      mesh,
      plan: { startMm: applicator.entry, targetMm: applicator.target },
      boundary: { breathing: input.settings.breathing },
      solver: {
        timeStepS: TIME_STEP_S,
        material: input.settings.material,
      },
      speedMmPerS: SPEED_MM_PER_S,
      startPhase: START_PHASE,
      warmUpCycles: WARM_UP_CYCLES,
      shouldStop,
    };
    // One shared warm-up, then two insertions (an upper bound: the needle starts near the capsule).
    const expectedSteps =
      (WARM_UP_CYCLES * input.settings.breathing.periodS) / TIME_STEP_S +
      (2 * distance(applicator.entry, applicator.target)) / (SPEED_MM_PER_S * TIME_STEP_S);
    let steps = 0;
    const progress = () => {
      steps++;
      if (steps % 10 === 0) {
        options.onFraction?.(Math.min(1, (runsDone + Math.min(1, steps / expectedSteps)) / runs));
      }
    };
    try {
      const frames = [frameRecorder(surface, markers), frameRecorder(surface, markers)];
      const stepMs: number[] = [];
      const { freehand, assisted } = rehearseFreehandAndAssisted({
        ...common,
        control: { strategy: STRATEGY },
        onStep: (record, simulation, pose, run) => {
          progress();
          // The warm-up is shared: both replays show its last second.
          for (const [k, recorder] of frames.entries()) {
            if (run === -1 || run === k) recorder.record(simulation, pose, record.depthMm ?? 0);
          }
        },
        onControlStep: (step) => stepMs.push(step.stepMs),
      });
      runsDone += 1;
      const [freehandFrames, assistedFrames] = frames;
      const tumour = nearestTumour(tumours, applicator.target);
      const reachRadiusMm = tumour ? tumour.radiusMm : null;
      const assistedError = assisted.finalTipErrorMm;
      const reached =
        Number.isFinite(assistedError) && reachRadiusMm !== null
          ? assistedError < reachRadiusMm
          : Number.isFinite(assistedError);
      rehearsal.push({
        applicatorIndex: index,
        freehandTipErrorMm: round(freehand.finalTipErrorMm, 2),
        assistedTipErrorMm: Number.isFinite(assistedError) ? round(assistedError, 2) : null,
        reached,
        ...(reached
          ? {}
          : {
              notReachedReason:
                reachRadiusMm === null
                  ? 'The assisted insertion did not end at a finite position.'
                  : `Even steered, the tip ends ${round(assistedError, 1)} mm from the target, ` +
                    `beyond the tumour's radius (about ${round(reachRadiusMm, 1)} mm).`,
            }),
        targetMotionMm: round(freehand.target.breathingMaxDisplacementMm, 2),
        targetSiRangeMm: round(freehand.target.breathingSiRangeMm, 2),
        errorAlongPath: pathSamples(freehand, assisted),
        meshNodes: mesh.nodes.length / 3,
        meshResolution: input.settings.resolution,
        meshQuality: {
          minDihedralDeg: round(quality.minDihedralDeg, 1),
          maxAspectRatio: round(quality.maxAspectRatio, 1),
        },
        breathing: { ...input.settings.breathing },
        strategy: STRATEGY,
        stepMs: round(median(stepMs), 1),
      });
      replays.push(
        {
          applicatorIndex: index,
          mode: 'freehand',
          triangles: surface.triangles,
          frames: freehandFrames.frames,
        },
        {
          applicatorIndex: index,
          mode: 'assisted',
          triangles: surface.triangles,
          frames: assistedFrames.frames,
        },
      );
    } catch (error) {
      if (error instanceof RehearsalStopped) {
        if (error.message === 'aborted') throw error;
        const done = rehearsal.length;
        return {
          rehearsal,
          replays,
          note:
            `The rehearsal stopped at its time limit of ${Math.round(input.timeLimitMs / 1000)} s ` +
            `with ${done} of ${input.applicators.length} applicator${input.applicators.length === 1 ? '' : 's'} rehearsed.`,
        };
      }
      if (error instanceof EngineRefusal) {
        skipped.push(`applicator ${index + 1}: ${error.message}`);
        runsDone = index + 1;
        continue;
      }
      throw error;
    }
  }
  options.onFraction?.(1);
  return {
    rehearsal,
    replays,
    ...(skipped.length ? { note: `Not rehearsed — ${skipped.join('; ')}` } : {}),
  };
}

/** Free-hand and assisted errors at the same depths (both runs share the schedule). */
function pathSamples(
  freehand: FreehandResult,
  assisted: FreehandResult,
): ApplicatorRehearsal['errorAlongPath'] {
  return freehand.path.map((sample, i) => ({
    depthMm: round(sample.depthMm, 1),
    freehandMm: round(sample.pathErrorMm, 2),
    assistedMm: i < assisted.path.length ? round(assisted.path[i].pathErrorMm, 2) : null,
  }));
}

interface Surface {
  nodes: Uint32Array;
  triangles: number[];
}

/** The mesh's boundary: its nodes and its triangles renumbered over them. */
function surfaceOf(mesh: TetMesh): Surface {
  const nodes = surfaceNodes(mesh);
  const index = new Map<number, number>();
  nodes.forEach((node, i) => index.set(node, i));
  return { nodes, triangles: Array.from(mesh.boundaryFaces, (node) => index.get(node) ?? 0) };
}

/** Tumour and vessel points embedded in the mesh, shown moving in the replay. */
interface StructureMarkers {
  kind: StructureKind;
  points: Embedding[];
}

/** Kinds whose points the replay carries, and how many points of each at most. */
const MARKER_KINDS: readonly StructureKind[] = [
  'tumour',
  'portal-vein',
  'hepatic-vein',
  'hepatic-artery',
  'bile-duct',
];
const MARKERS_PER_KIND = 150;

interface TumourSphere {
  centreMm: Vec3;
  radiusMm: number;
}

/**
 * One pass over the label map for what the stage needs of the structures: each tumour label's
 * centroid and equal-volume sphere radius (r = (3V/4π)^⅓), and each marker kind's voxels — a
 * tumour's outer voxels (a face neighbour outside its label), a vessel's every voxel — sampled
 * evenly up to MARKERS_PER_KIND and embedded where they lie inside the mesh.
 */
function readStructures(
  input: RehearsalStageInput,
  mesh: TetMesh,
): { tumours: TumourSphere[]; markers: StructureMarkers[] } {
  const { geometry, labelMap: labels } = input;
  const [nx, ny, nz] = geometry.dimensions;
  const kindOfLabel = new Map<number, StructureKind>();
  for (const structure of input.structures) {
    if (structure.kind && MARKER_KINDS.includes(structure.kind)) {
      kindOfLabel.set(structure.labelValue, structure.kind);
    }
  }
  const tumourSums = new Map<number, { sum: Vec3; count: number }>();
  const voxels = new Map<StructureKind, number[]>();
  let index = 0;
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++, index++) {
        const label = labels[index];
        const kind = label === 0 ? undefined : kindOfLabel.get(label);
        if (!kind) continue;
        if (kind === 'tumour') {
          const entry = tumourSums.get(label) ?? { sum: [0, 0, 0], count: 0 };
          entry.sum[0] += i;
          entry.sum[1] += j;
          entry.sum[2] += k;
          entry.count++;
          tumourSums.set(label, entry);
          const inside =
            i > 0 &&
            i < nx - 1 &&
            j > 0 &&
            j < ny - 1 &&
            k > 0 &&
            k < nz - 1 &&
            labels[index - 1] === label &&
            labels[index + 1] === label &&
            labels[index - nx] === label &&
            labels[index + nx] === label &&
            labels[index - nx * ny] === label &&
            labels[index + nx * ny] === label;
          if (inside) continue;
        }
        const list = voxels.get(kind) ?? [];
        list.push(index);
        voxels.set(kind, list);
      }
    }
  }
  const [si, sj, sk] = geometry.spacingMm;
  const tumours = [...tumourSums.values()].map(({ sum, count }) => ({
    centreMm: voxelToLps(geometry, [sum[0] / count, sum[1] / count, sum[2] / count]),
    radiusMm: Math.cbrt((3 * count * si * sj * sk) / (4 * Math.PI)),
  }));
  const markers: StructureMarkers[] = [];
  for (const [kind, list] of voxels) {
    const stride = Math.max(1, Math.ceil(list.length / MARKERS_PER_KIND));
    const pointsMm: Vec3[] = [];
    for (let n = 0; n < list.length; n += stride) {
      const v = list[n];
      pointsMm.push(
        voxelToLps(geometry, [v % nx, Math.floor(v / nx) % ny, Math.floor(v / (nx * ny))]),
      );
    }
    const points = embedPoints(mesh, pointsMm).filter(
      (found): found is Embedding => found !== null,
    );
    if (points.length > 0) markers.push({ kind, points });
  }
  return { tumours, markers };
}

/** Collects replay frames every FRAME_EVERY_S from FRAMES_BEFORE_S before the needle moves. */
function frameRecorder(surface: Surface, markers: readonly StructureMarkers[]) {
  const frames: RehearsalFrame[] = [];
  /** Warm-up frames, the last FRAMES_BEFORE_S of them kept until the needle moves. */
  const warmUp: RehearsalFrame[] = [];
  let lastTimeS = -Infinity;
  let hasStarted = false;
  const snap = (simulation: InsertionSimulation, pose: NeedlePose | null, depthMm: number) => {
    const x = simulation.solver.positionsM;
    const surfaceMm: number[] = new Array(3 * surface.nodes.length);
    surface.nodes.forEach((node, i) => {
      for (let a = 0; a < 3; a++) surfaceMm[3 * i + a] = Math.round(x[3 * node + a] * 10000) / 10;
    });
    const target = simulation.targetMm().map((v) => round(v, 1)) as Vec3;
    const base = (pose?.baseMm ?? [0, 0, 0]).map((v) => round(v, 1)) as Vec3;
    const tip = pose ? (needleTipMm(pose, depthMm).map((v) => round(v, 1)) as Vec3) : base;
    const structures = markers.map(({ kind, points }) => {
      const pointsMm: number[] = [];
      for (const point of points) {
        for (const value of embeddedPosition(x, simulation.mesh, point)) {
          pointsMm.push(Math.round(value * 10000) / 10);
        }
      }
      return { kind, pointsMm };
    });
    return {
      timeS: round(simulation.timeS, 3),
      depthMm: round(depthMm, 1),
      surfaceMm,
      baseMm: base,
      tipMm: tip,
      targetMm: target,
      structures,
    };
  };
  return {
    frames,
    record(simulation: InsertionSimulation, pose: NeedlePose | null, depthMm: number) {
      const t = simulation.timeS;
      if (pose === null) {
        // Before the needle moves: keep only the last FRAMES_BEFORE_S of the warm-up.
        if (t - lastTimeS + 1e-9 < FRAME_EVERY_S) return;
        lastTimeS = t;
        warmUp.push(snap(simulation, null, 0));
        while (t - warmUp[0].timeS > FRAMES_BEFORE_S + 1e-3) warmUp.shift();
        return;
      }
      if (!hasStarted) {
        hasStarted = true;
        frames.push(...warmUp.splice(0));
      }
      if (t - lastTimeS + 1e-9 < FRAME_EVERY_S) return;
      lastTimeS = t;
      frames.push(snap(simulation, pose, depthMm));
    },
  };
}

function nearestTumour(spheres: TumourSphere[], point: Vec3): TumourSphere | null {
  let best: TumourSphere | null = null;
  for (const sphere of spheres) {
    if (!best || distance(sphere.centreMm, point) < distance(best.centreMm, point)) best = sphere;
  }
  return best;
}

const round = (value: number, digits: number): number => Number(value.toFixed(digits));
const median = (values: number[]): number =>
  values.length === 0 ? 0 : [...values].sort((a, b) => a - b)[values.length >> 1];
