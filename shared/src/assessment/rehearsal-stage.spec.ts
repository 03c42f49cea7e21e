import { describe, expect, it } from 'vitest';
import { DEFAULT_REHEARSAL_SETTINGS } from '../api/rehearsal-settings';
import type { Vec3 } from '../geometry/vector';
import { centredGeometry } from '../rehearsal/insertion/testing/ellipsoid-organ';
import { rehearseApplicators, type RehearsalStageInput } from './rehearsal-stage';

// The stage on an invented label map: an ellipsoidal "liver" (semi-axes 34, 27, 30 mm, label 1)
// holding a spherical tumour (radius 8 mm, label 2) and a straight vessel (radius 2 mm along
// x, label 3) on 2 mm voxels; one applicator from 60 mm in front to the tumour's centre, the
// coarse mesh to keep the test short.
const voxelMm = 2;
const dimensions: Vec3 = [45, 40, 40];
const geometry = centredGeometry(dimensions, voxelMm);
const tumourCentre: Vec3 = [4, 2, 2];
const labelMap = new Uint8Array(dimensions[0] * dimensions[1] * dimensions[2]);
let index = 0;
for (let k = 0; k < dimensions[2]; k++) {
  for (let j = 0; j < dimensions[1]; j++) {
    for (let i = 0; i < dimensions[0]; i++, index++) {
      const p = [i, j, k].map((v, a) => geometry.originLps[a] + v * voxelMm);
      if ((p[0] / 34) ** 2 + (p[1] / 27) ** 2 + (p[2] / 30) ** 2 > 1) continue;
      labelMap[index] = 1;
      if (Math.hypot(p[0] - tumourCentre[0], p[1] - tumourCentre[1], p[2] - tumourCentre[2]) <= 8) {
        labelMap[index] = 2;
      } else if (Math.hypot(p[1] - 12, p[2] + 10) <= 2) {
        labelMap[index] = 3;
      }
    }
  }
}
const input: RehearsalStageInput = {
  geometry,
  labelMap,
  structures: [
    { id: 'liver', labelValue: 1, kind: 'liver' },
    { id: 'tumour', labelValue: 2, kind: 'tumour' },
    { id: 'vein', labelValue: 3, kind: 'hepatic-vein' },
  ],
  applicators: [{ entry: [6, -60, 8], target: tumourCentre }],
  settings: { ...DEFAULT_REHEARSAL_SETTINGS, resolution: 'coarse' },
  timeLimitMs: 120_000,
};

describe('the rehearsal stage of an assessment', () => {
  const fractions: number[] = [];
  const output = rehearseApplicators(input, { onFraction: (f) => fractions.push(f) });

  it('rehearses the applicator: assisted within 2 mm, inside the tumour, the target moving', () => {
    expect(output.note).toBeUndefined();
    const [entry] = output.rehearsal;
    expect(entry.applicatorIndex).toBe(0);
    expect(entry.reached).toBe(true);
    // Sub-2-mm placement is the usual aim of robot-assisted needle placement (common practice).
    expect(entry.assistedTipErrorMm).toBeLessThan(2);
    // Lujan's curve moves the diaphragm 12 mm; a target inside follows 30–100 % of it.
    expect(entry.targetSiRangeMm).toBeGreaterThan(0.3 * 12);
    expect(entry.targetSiRangeMm).toBeLessThanOrEqual(12);
    expect(entry.meshResolution).toBe('coarse');
    expect(entry.meshQuality?.minDihedralDeg).toBeGreaterThan(0);
    expect(entry.errorAlongPath.length).toBeGreaterThan(5);
    expect(entry.breathing).toEqual(DEFAULT_REHEARSAL_SETTINGS.breathing);
  });

  it('reports progress that rises to 1', () => {
    expect(fractions.length).toBeGreaterThan(3);
    for (let i = 1; i < fractions.length; i++) {
      expect(fractions[i]).toBeGreaterThanOrEqual(fractions[i - 1]);
    }
    expect(fractions[fractions.length - 1]).toBe(1);
  });

  it('replays both insertions with the surface, the needle and the embedded tumour and vessel', () => {
    expect(output.replays.map((replay) => replay.mode)).toEqual(['freehand', 'assisted']);
    for (const replay of output.replays) {
      const nodes = replay.frames[0].surfaceMm.length / 3;
      expect(Math.max(...replay.triangles)).toBeLessThan(nodes);
      const kinds = replay.frames[0].structures?.map((group) => group.kind).sort();
      expect(kinds).toEqual(['hepatic-vein', 'tumour']);
      // The embedded tumour points move with the breathing liver between the first and the
      // last frame (their superior–inferior mean changes).
      const meanZ = (points: number[]) =>
        points.filter((_, i) => i % 3 === 2).reduce((s, v) => s + v, 0) / (points.length / 3);
      const tumourAt = (f: number) =>
        replay.frames[f].structures?.find((group) => group.kind === 'tumour')?.pointsMm ?? [];
      expect(
        Math.abs(meanZ(tumourAt(0)) - meanZ(tumourAt(replay.frames.length - 1))),
      ).toBeGreaterThan(0.1);
    }
  });

  it('ends at its time limit with a note, keeping nothing half done', () => {
    const stopped = rehearseApplicators({ ...input, timeLimitMs: 1 });
    expect(stopped.rehearsal).toEqual([]);
    expect(stopped.note).toMatch(/time limit of 0 s with 0 of 1 applicator rehearsed/);
  });

  it('names an applicator it cannot rehearse (its target outside the liver) and goes on', () => {
    const outside = rehearseApplicators({
      ...input,
      applicators: [{ entry: [6, -60, 8], target: [0, -50, 0] }],
    });
    expect(outside.rehearsal).toEqual([]);
    expect(outside.note).toMatch(/applicator 1: .*outside/);
  });
});
