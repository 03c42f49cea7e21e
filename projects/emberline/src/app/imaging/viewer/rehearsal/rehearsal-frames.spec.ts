import {
  replay,
  replayFrames,
  tetrahedronTriangles,
} from '../../../plans/testing/rehearsal-fixtures';
import {
  ReplayDataError,
  cameraDirection,
  checkedReplay,
  frameReadout,
  frameShapes,
  nearestFrameIndex,
  tipToTargetMm,
} from './rehearsal-frames';

describe('rehearsal frames → the 3D scene', () => {
  const frames = replayFrames(5, (frame) => 2 * frame, 3);
  const freehand = replay('freehand', frames);

  it('lays the triangles out as a VTK cell array: each cell its point count, then its points', () => {
    // VTK's cell array layout (the legacy VTK file format's POLYGONS section and vtk.js
    // vtkCellArray): n, i1 … in per cell.
    const geometry = checkedReplay(freehand);
    expect(geometry.nodeCount).toBe(4);
    expect(geometry.triangleCount).toBe(4);
    expect(Array.from(geometry.polys)).toEqual([3, 0, 2, 1, 3, 0, 1, 3, 3, 1, 2, 3, 3, 0, 3, 2]);
    expect(Array.from(geometry.polys).filter((_, index) => index % 4 !== 0)).toEqual(
      tetrahedronTriangles,
    );
  });

  it('gives each frame its own node positions, needle ends and target', () => {
    const third = frameShapes(freehand, 2);
    // The fixture lifts every node by 2 mm per frame along z (superior in LPS).
    expect(Array.from(third.surfacePoints)).toEqual([0, 0, 4, 30, 0, 4, 0, 30, 4, 0, 0, 34]);
    expect(third.baseMm).toEqual(frames[2].baseMm);
    expect(third.tipMm).toEqual(frames[2].tipMm);
    expect(third.targetMm).toEqual([10, -18, 14]);
    // Another frame, other points: the scene is not left on the first.
    expect(Array.from(frameShapes(freehand, 4).surfacePoints)).toEqual(frames[4].surfaceMm);
    expect(Array.from(frameShapes(freehand, 0).surfacePoints)).not.toEqual(frames[4].surfaceMm);
  });

  it('carries the embedded tumour and vessel points by kind, dropping a group that is not x y z', () => {
    const withStructures = replay(
      'freehand',
      frames.map((frame, index) => ({
        ...frame,
        structures: [
          { kind: 'tumour' as const, pointsMm: [index, 1, 2, 3, 4, 5] },
          { kind: 'portal-vein' as const, pointsMm: [1, 2] },
        ],
      })),
    );
    const shapes = frameShapes(withStructures, 3);
    expect(shapes.structures.map((group) => group.kind)).toEqual(['tumour']);
    expect(Array.from(shapes.structures[0].points)).toEqual([3, 1, 2, 3, 4, 5]);
    expect(frameShapes(freehand, 0).structures).toEqual([]);
  });

  it('keeps an index past either end on the first or last frame', () => {
    expect(frameShapes(freehand, -3).targetMm).toEqual(frames[0].targetMm);
    expect(frameShapes(freehand, 99).targetMm).toEqual(frames[4].targetMm);
  });

  it('reads out time to the hundredth of a second and depth to the tenth of a millimetre', () => {
    expect(frameReadout(frames[3])).toBe('t = 1.20 s · depth 31.5 mm');
  });

  it('measures tip to target as a straight line (Pythagoras: a 3-4-5 triangle)', () => {
    const frame = { ...frames[0], tipMm: [13, 4, 10] as [number, number, number] };
    expect(tipToTargetMm({ ...frame, targetMm: [10, 0, 10] })).toBeCloseTo(5, 12);
    // In the fixture the tip, 3 mm to the side, is level with the target at 42 mm depth.
    expect(tipToTargetMm(frames[4])).toBeCloseTo(3, 12);
  });

  it('lands a switch of insertion on the frame nearest in time, the earlier on a tie', () => {
    const assisted = replayFrames(9, () => 0, 0); // 0, 0.4 … 3.2 s
    expect(nearestFrameIndex(assisted, 1.2)).toBe(3);
    expect(nearestFrameIndex(assisted, 1.3)).toBe(3);
    expect(nearestFrameIndex(assisted, 1.4)).toBe(3);
    expect(nearestFrameIndex(assisted, 9)).toBe(8);
    expect(nearestFrameIndex(assisted, -1)).toBe(0);
  });

  it('looks across the needle: from the front unless the needle runs front to back', () => {
    const dot = (a: readonly number[], b: readonly number[]) =>
      a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
    // A needle from the patient's right to left (+x in LPS) is seen from the front.
    expect(cameraDirection([-50, 0, 0], [10, 0, 0])).toEqual([0, -1, 0]);
    // An oblique one: the front view less its part along the needle, at right angles to it.
    const oblique = cameraDirection([0, -100, 0], [0, -50, 50]);
    expect(dot(oblique, [0, 50, 50])).toBeCloseTo(0, 12);
    expect(Math.hypot(...oblique)).toBeCloseTo(1, 12);
    expect(oblique[1]).toBeLessThan(0);
    // Front to back: from the patient's left (+x).
    expect(cameraDirection([10, -100, 10], [10, -60, 12])).toEqual([1, 0, 0]);
  });

  describe('refuses a replay it cannot draw, saying why', () => {
    const refusal = (changed: Partial<typeof freehand>) => () =>
      checkedReplay({ ...freehand, ...changed });

    it('without frames or triangles', () => {
      expect(refusal({ frames: [] })).toThrow(ReplayDataError);
      expect(refusal({ frames: [] })).toThrow(
        'The free-hand replay cannot be drawn: it has no frames.',
      );
      expect(refusal({ triangles: [] })).toThrow('it has no surface triangles.');
    });

    it('with indices that are not whole triangles or name a node the surface lacks', () => {
      expect(refusal({ triangles: [0, 1, 2, 3] })).toThrow(
        'its 4 triangle indices are not whole triangles.',
      );
      expect(refusal({ triangles: [0, 1, 2, 0, 1, 4] })).toThrow(
        'triangle 2 names node 4, but the surface has 4 nodes (0 to 3).',
      );
      expect(refusal({ triangles: [0, 1, 2.5] })).toThrow('triangle 1 names node 2.5');
    });

    it('with a frame of another node count, a coordinate that is no number or a missing point', () => {
      const short = frames.map((frame, index) =>
        index === 2 ? { ...frame, surfaceMm: frame.surfaceMm.slice(0, 9) } : frame,
      );
      expect(refusal({ frames: short })).toThrow(
        'frame 3 gives 9 coordinates for 4 surface nodes (12 expected).',
      );
      const broken = frames.map((frame, index) =>
        index === 1
          ? { ...frame, surfaceMm: [...frame.surfaceMm.slice(0, 11), Number.NaN] }
          : frame,
      );
      expect(refusal({ frames: broken })).toThrow(
        'frame 2 has a surface coordinate that is not a number.',
      );
      const noTip = frames.map((frame, index) =>
        index === 4 ? { ...frame, tipMm: [1, 2] as unknown as [number, number, number] } : frame,
      );
      expect(refusal({ frames: noTip })).toThrow('frame 5 has no needle tip position.');
    });

    it('with time running backwards', () => {
      const swapped = [frames[0], frames[2], frames[1]];
      expect(refusal({ frames: swapped })).toThrow('frame 3 comes before frame 2 in time.');
    });
  });
});
