/**
 * Invented insertion rehearsals for the tests of the comparison's rehearsal group, its plot and
 * the 3D replay: made-up figures on a made-up four-node surface, no patient data and no output
 * of the engine.
 */
import type {
  ApplicatorRehearsal,
  RehearsalFrame,
  RehearsalReplay,
  RehearsalReplayView,
} from '@emberline/shared';

/** An insertion to 80 mm: free-hand drifts to 3.42 mm, the steered needle stays under 0.6 mm. */
export function rehearsal(overrides: Partial<ApplicatorRehearsal> = {}): ApplicatorRehearsal {
  return {
    applicatorIndex: 0,
    freehandTipErrorMm: 3.42,
    assistedTipErrorMm: 0.38,
    reached: true,
    targetMotionMm: 10.54,
    targetSiRangeMm: 9.84,
    errorAlongPath: [
      { depthMm: 0, freehandMm: 0, assistedMm: 0 },
      { depthMm: 20, freehandMm: 0.8, assistedMm: 0.2 },
      { depthMm: 40, freehandMm: 2.1, assistedMm: 0.55 },
      { depthMm: 60, freehandMm: 2.9, assistedMm: 0.3 },
      { depthMm: 80, freehandMm: 3.42, assistedMm: 0.38 },
    ],
    meshNodes: 2886,
    meshResolution: 'medium',
    breathing: { amplitudeMm: 12, periodS: 4, shapeN: 1 },
    strategy: 'factorised',
    stepMs: 52.4,
    ...overrides,
  };
}

/** The assisted run gave up at 40 mm: the target had moved out of the needle's reach. */
export function notReachedRehearsal(): ApplicatorRehearsal {
  return rehearsal({
    freehandTipErrorMm: 6.1,
    assistedTipErrorMm: null,
    reached: false,
    notReachedReason: 'The target moved out of the needle’s reach at 40 mm depth.',
    errorAlongPath: [
      { depthMm: 0, freehandMm: 0, assistedMm: 0 },
      { depthMm: 20, freehandMm: 1.5, assistedMm: 0.4 },
      { depthMm: 40, freehandMm: 3.8, assistedMm: 1.2 },
      { depthMm: 60, freehandMm: 5.2, assistedMm: null },
      { depthMm: 80, freehandMm: 6.1, assistedMm: null },
    ],
    strategy: 'resolve-constraints',
    breathing: { amplitudeMm: 15, periodS: 4.5, shapeN: 2 },
    meshNodes: 611,
    meshResolution: 'coarse',
    meshQuality: { minDihedralDeg: 11.7, maxAspectRatio: 7.2 },
  });
}

/** A tetrahedron: four nodes, four triangles (outward by the right-hand rule). */
export const tetrahedronTriangles = [0, 2, 1, 0, 1, 3, 1, 2, 3, 0, 3, 2];
const tetrahedron = [0, 0, 0, 30, 0, 0, 0, 30, 0, 0, 0, 30];

/**
 * Frames 0.4 s apart, the needle 10.5 mm deeper each time; the surface and the target shifted
 * head-wards by `shiftMm(frame)` (invented, for the replay's mechanics only).
 */
export function replayFrames(
  count: number,
  shiftMm: (frame: number) => number,
  tipOffsetMm: number,
): RehearsalFrame[] {
  return Array.from({ length: count }, (_, frame) => {
    const shift = shiftMm(frame);
    const depth = 10.5 * frame;
    return {
      timeS: 0.4 * frame,
      depthMm: depth,
      surfaceMm: tetrahedron.map((value, index) => (index % 3 === 2 ? value + shift : value)),
      baseMm: [10, -100 + depth, 10],
      tipMm: [10 + tipOffsetMm, -60 + depth, 10 + shift],
      targetMm: [10, -18, 10 + shift],
    };
  });
}

export function replay(
  mode: RehearsalReplay['mode'],
  frames: RehearsalFrame[],
  applicatorIndex = 0,
): RehearsalReplay {
  return { applicatorIndex, mode, triangles: [...tetrahedronTriangles], frames };
}

/** Free-hand: five frames 0 … 1.6 s; assisted: nine frames 0 … 3.2 s; the tip 3 mm off. */
export function replayView(): RehearsalReplayView {
  return {
    caution: 'Invented caution of the server: a simulation estimate, the treating team decides.',
    replays: [
      replay(
        'freehand',
        replayFrames(5, (frame) => frame, 3),
      ),
      replay(
        'assisted',
        replayFrames(9, (frame) => 0.5 * frame, 0),
      ),
    ],
  };
}
