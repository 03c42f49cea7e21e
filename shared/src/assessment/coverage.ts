/**
 * Coverage of the tumours by an ablation zone: per tumour its volume, the
 * share of its voxels inside the zone, the minimal ablative margin (the smallest local margin
 * over all its voxels, negative where tumour lies outside the zone; zone-field.ts `marginAt`),
 * the share of its surface voxels whose local margin falls short of the target, and each
 * surface voxel's margin for drawing; and the volume of every at-risk kind inside the zone.
 * Works on the crop grid; positions LPS, millimetres; volumes millilitres.
 *
 * A tumour surface voxel is one with a face neighbour that is not of the same structure. The
 * margin target follows the trade: ≥ 5 mm, ideally 10 mm (Wang X et al., Cardiovasc Intervent
 * Radiol 2013;36:166; Shady W et al., J Vasc Interv Radiol 2018) — the safety profile holds it.
 */
import type {
  CollateralVolume,
  TumourCoverage,
  ZoneAssessment,
  ZoneModel,
} from '../api/assessments';
import { structureKinds } from '../api/structures';
import { voxelToLps, type VolumeGeometry } from '../geometry/patient-geometry';
import { kindCode, kindOfCode } from './label-inventory';
import type { VoxelExtent } from './voxel-extent';
import { fieldIndex, marginAt, type ZoneField } from './zone-field';

/** A tumour structure to assess. */
export interface CoverageTumour {
  structureId: string;
  labelValue: number;
  /** How the board names it ("segment VIII, 24 mm"; `tumourLabelOf`), carried to the figures. */
  label?: string;
  /** Its voxels' bounding box in crop voxel indices. */
  extent: VoxelExtent;
}

export interface CoverageInput {
  model: ZoneModel;
  /** The crop's grid, its labels and their kind codes (i fastest). */
  cropGeometry: VolumeGeometry;
  cropLabels: Uint8Array | Uint16Array;
  kindCodes: Uint8Array;
  /** The zone on the crop: non-zero inside. */
  zoneMask: Uint8Array;
  /** The zone's signed distance over a box holding every tumour voxel. */
  zoneField: ZoneField;
  tumours: readonly CoverageTumour[];
  marginTargetMm: number;
}

/** Local margins on one tumour's surface, for colouring it. */
export interface TumourMarginSamples {
  structureId: string;
  model: ZoneModel;
  /** Surface voxel centres, LPS, millimetres: x, y, z of each in turn. */
  lps: Float32Array;
  /** Local margin at each, mm (negative outside the zone). */
  marginMm: Float32Array;
}

export interface CoverageFigures {
  zone: ZoneAssessment;
  marginSamples: TumourMarginSamples[];
}

/** Kinds whose volume inside the zone is not collateral damage. */
const TREATED_KINDS = new Set([kindCode('tumour'), kindCode('liver')]);

/** Volume of one voxel of the grid, millilitres. */
export function voxelVolumeMl(geometry: VolumeGeometry): number {
  const [wi, wj, wk] = geometry.spacingMm;
  return (wi * wj * wk) / 1000;
}

/** The coverage figures of one zone. */
export function assessCoverage(input: CoverageInput): CoverageFigures {
  const { cropGeometry, zoneMask } = input;
  const voxelMl = voxelVolumeMl(cropGeometry);
  const tumours: TumourCoverage[] = [];
  const marginSamples: TumourMarginSamples[] = [];
  for (const tumour of input.tumours) {
    const figures = tumourFigures(input, tumour);
    tumours.push({
      structureId: tumour.structureId,
      ...(tumour.label === undefined ? {} : { label: tumour.label }),
      volumeMl: figures.voxelCount * voxelMl,
      coveredPercent: figures.voxelCount === 0 ? 0 : (100 * figures.covered) / figures.voxelCount,
      minimalMarginMm: figures.minimalMarginMm,
      surfaceBelowTargetPercent:
        figures.surfaceMarginsMm.length === 0
          ? 0
          : (100 * figures.surfaceBelowTarget) / figures.surfaceMarginsMm.length,
    });
    marginSamples.push({
      structureId: tumour.structureId,
      model: input.model,
      lps: figures.surfaceLps,
      marginMm: figures.surfaceMarginsMm,
    });
  }
  const collateralCounts = new Float64Array(256);
  let zoneVoxels = 0;
  for (let index = 0; index < zoneMask.length; index++) {
    if (zoneMask[index] === 0) continue;
    zoneVoxels++;
    collateralCounts[input.kindCodes[index]]++;
  }
  const collateral: CollateralVolume[] = structureKinds
    .map(kindCode)
    .filter((code) => !TREATED_KINDS.has(code) && collateralCounts[code] > 0)
    .map((code) => ({ kind: kindOfCode(code), volumeMl: collateralCounts[code] * voxelMl }));
  return {
    zone: { model: input.model, volumeMl: zoneVoxels * voxelMl, tumours, collateral },
    marginSamples,
  };
}

interface TumourTally {
  voxelCount: number;
  covered: number;
  minimalMarginMm: number;
  surfaceBelowTarget: number;
  surfaceLps: Float32Array;
  surfaceMarginsMm: Float32Array;
}

function tumourFigures(input: CoverageInput, tumour: CoverageTumour): TumourTally {
  const { cropGeometry, cropLabels, zoneMask, zoneField } = input;
  const [nx, ny, nz] = cropGeometry.dimensions;
  const slab = nx * ny;
  const label = tumour.labelValue;
  const low = tumour.extent.min.map((value) => Math.max(0, Math.floor(value)));
  const high = tumour.extent.max.map((value, axis) =>
    Math.min(cropGeometry.dimensions[axis] - 1, Math.ceil(value)),
  );
  let voxelCount = 0;
  let covered = 0;
  let minimalMarginMm = Infinity;
  let surfaceBelowTarget = 0;
  const surfaceLps: number[] = [];
  const surfaceMargins: number[] = [];
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      for (let i = low[0]; i <= high[0]; i++) {
        const index = i + nx * (j + ny * k);
        if (cropLabels[index] !== label) continue;
        if (fieldIndex(zoneField, i, j, k) < 0) {
          throw new RangeError(`tumour ${tumour.structureId} reaches beyond the zone field`);
        }
        voxelCount++;
        if (zoneMask[index] !== 0) covered++;
        const marginMm = marginAt(zoneField, i, j, k);
        if (marginMm < minimalMarginMm) minimalMarginMm = marginMm;
        const isSurface =
          i === 0 ||
          j === 0 ||
          k === 0 ||
          i === nx - 1 ||
          j === ny - 1 ||
          k === nz - 1 ||
          cropLabels[index - 1] !== label ||
          cropLabels[index + 1] !== label ||
          cropLabels[index - nx] !== label ||
          cropLabels[index + nx] !== label ||
          cropLabels[index - slab] !== label ||
          cropLabels[index + slab] !== label;
        if (!isSurface) continue;
        surfaceLps.push(...voxelToLps(cropGeometry, [i, j, k]));
        surfaceMargins.push(marginMm);
        if (marginMm < input.marginTargetMm) surfaceBelowTarget++;
      }
    }
  }
  return {
    voxelCount,
    covered,
    minimalMarginMm,
    surfaceBelowTarget,
    surfaceLps: Float32Array.from(surfaceLps),
    surfaceMarginsMm: Float32Array.from(surfaceMargins),
  };
}
