/**
 * Coverage of the tumours by an ablation zone: per tumour its volume, the share of its voxels
 * inside the zone, the minimal ablative margin — the smallest local margin over the faces of
 * its labelled voxels, negative where tumour lies outside the zone — with its conservative
 * bound, the share of its surface area whose local margin falls short of the target, and each
 * surface voxel's margin for drawing (tumour-surface.ts); and the volume of every at-risk kind
 * inside the zone. Works on the crop grid; positions LPS, millimetres; volumes millilitres.
 *
 * The bound allows the tumour's true surface to lie up to a voxel beyond its labelled voxels
 * (the smallest margin over their cells widened by a voxel) and the zone's surface to lie
 * `boundaryErrorMm` nearer than the zone model puts it. The margin target follows the trade:
 * ≥ 5 mm, ideally 10 mm (Wang X et al., Cardiovasc Intervent Radiol 2013;36:166; Shady W et
 * al., J Vasc Interv Radiol 2018) — the safety profile holds it.
 */
import type {
  CollateralVolume,
  TumourCoverage,
  ZoneAssessment,
  ZoneModel,
} from '../api/assessments';
import { structureKinds } from '../api/structures';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { kindCode, kindOfCode } from './label-inventory';
import { tallyTumourSurface } from './tumour-surface';
import type { VoxelExtent } from './voxel-extent';
import type { ZoneSurface } from './zone-surface';

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
  /** The zone's surface, readable at every tumour voxel. */
  zoneSurface: ZoneSurface;
  /** How far the zone model's surface may lie from where it is read, mm (≥ 0). */
  boundaryErrorMm: number;
  tumours: readonly CoverageTumour[];
  marginTargetMm: number;
}

/** Local margins on one tumour's surface, for colouring it. */
export interface TumourMarginSamples {
  structureId: string;
  model: ZoneModel;
  /** Surface voxel centres, LPS, millimetres: x, y, z of each in turn. */
  lps: Float32Array;
  /** Smallest local margin of each one's exposed faces, mm (negative outside the zone). */
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
  if (!(input.boundaryErrorMm >= 0)) {
    throw new RangeError(`boundaryErrorMm must be 0 or more, got ${input.boundaryErrorMm}`);
  }
  const voxelMl = voxelVolumeMl(cropGeometry);
  const tumours: TumourCoverage[] = [];
  const marginSamples: TumourMarginSamples[] = [];
  for (const tumour of input.tumours) {
    const tally = tallyTumourSurface(
      {
        cropGeometry,
        cropLabels: input.cropLabels,
        labelValue: tumour.labelValue,
        extent: tumour.extent,
      },
      zoneMask,
      input.zoneSurface,
      input.marginTargetMm,
    );
    tumours.push({
      structureId: tumour.structureId,
      ...(tumour.label === undefined ? {} : { label: tumour.label }),
      volumeMl: tally.voxelCount * voxelMl,
      coveredPercent: tally.voxelCount === 0 ? 0 : (100 * tally.covered) / tally.voxelCount,
      minimalMarginMm: tally.minimalMarginMm,
      minimalMarginLowerMm: tally.widenedMinimalMarginMm - input.boundaryErrorMm,
      surfaceBelowTargetPercent:
        tally.surfaceAreaMm2 === 0 ? 0 : (100 * tally.belowTargetAreaMm2) / tally.surfaceAreaMm2,
    });
    marginSamples.push({
      structureId: tumour.structureId,
      model: input.model,
      lps: tally.surfaceLps,
      marginMm: tally.surfaceMarginsMm,
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
    zone: {
      model: input.model,
      boundaryErrorMm: input.boundaryErrorMm,
      volumeMl: zoneVoxels * voxelMl,
      tumours,
      collateral,
    },
    marginSamples,
  };
}
