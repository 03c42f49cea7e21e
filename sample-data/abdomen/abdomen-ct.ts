/**
 * Generates the invented abdominal CT in memory: DICOM slices, a NIfTI-1 label map, the label
 * legend and the manifest of ground truth. Deterministic: the same options give the same bytes.
 */
import { ABDOMEN_GRID, voxelCentreLps, type CtGrid } from './grid';
import { buildManifest, type AbdomenCtManifest } from './manifest';
import { buildPhantom, type Phantom } from './phantom';
import { addNoise, countLabels, forEachVoxelInside, paintLayers } from './rasterise';
import { SeededRandom } from './rng';
import { solidOf } from './solids';
import type { StructureKind } from './structure-kinds';
import { SAMPLE_DATA_UID_ROOT, seriesUids } from './uids';
import {
  CT_IMAGE_STORAGE,
  EXPLICIT_VR_LITTLE_ENDIAN,
  INVENTED_PATIENT,
  RESCALE_INTERCEPT_HU,
  writeCtSeries,
} from './write-dicom';
import { writeNiftiLabelMapGz } from './write-nifti';

export const DEFAULT_SEED = 20250301;
export const DEFAULT_NOISE_STANDARD_DEVIATION_HU = 10;

export const DICOM_DIRECTORY = 'dicom';
export const LABEL_MAP_FILE_NAME = 'labels.nii.gz';
export const LABELS_FILE_NAME = 'labels.json';
export const MANIFEST_FILE_NAME = 'manifest.json';

export interface AbdomenCtOptions {
  /** Seed of the noise (and part of the UIDs): an integer from 0 to 2³² − 1. */
  seed?: number;
  /** Standard deviation of the noise added to every voxel, HU; 0 for none. */
  noiseStandardDeviationHu?: number;
  /** The voxel grid (default `ABDOMEN_GRID`, the committed sample; `CLINICAL_GRID` for benchmarks). */
  grid?: Readonly<CtGrid>;
}

export interface GeneratedAbdomenCt {
  /** DICOM Part 10 files, one a slice, from the lowest z (slice k = 0) up. */
  slices: ArrayBuffer[];
  /** Paths of the slices relative to the output folder, in the same order. */
  sliceFileNames: string[];
  /** labels.nii.gz: the label map on the same grid. */
  labelMapNiftiGz: Uint8Array;
  /** labels.json: label value (as a string) → structure kind. */
  labels: Record<string, StructureKind>;
  manifest: AbdomenCtManifest;
}

export function generateAbdomenCt(options: AbdomenCtOptions = {}): GeneratedAbdomenCt {
  const seed = options.seed ?? DEFAULT_SEED;
  const noiseStandardDeviationHu =
    options.noiseStandardDeviationHu ?? DEFAULT_NOISE_STANDARD_DEVIATION_HU;
  if (!(noiseStandardDeviationHu >= 0) || !Number.isFinite(noiseStandardDeviationHu)) {
    throw new RangeError(
      `The noise must be a finite number of HU ≥ 0; got ${noiseStandardDeviationHu}.`,
    );
  }
  const grid = options.grid ?? ABDOMEN_GRID;
  const uids = seriesUids(seed, grid.slices);

  const phantom = buildPhantom();
  const painted = paintLayers(grid, phantom.layers);
  const labelCounts = countLabels(painted.labels);
  checkAnalyticShapesIntact(grid, phantom, painted.labels, labelCounts);

  const hu = addNoise(painted.nominalHu, new SeededRandom(seed), noiseStandardDeviationHu);
  const slices = writeCtSeries({ grid, hu, uids });
  const sliceFileNames = slices.map(
    (_, k) => `${DICOM_DIRECTORY}/slice-${String(k + 1).padStart(3, '0')}.dcm`,
  );
  const labelMapNiftiGz = writeNiftiLabelMapGz(
    grid,
    painted.labels,
    'Emberline invented abdomen: label map (not patient data)',
  );
  const labels: Record<string, StructureKind> = {};
  for (const structure of phantom.structures) labels[String(structure.labelValue)] = structure.kind;

  const manifest = buildManifest({
    phantom,
    grid,
    labelCounts,
    seed,
    noiseStandardDeviationHu,
    uids,
    uidRoot: SAMPLE_DATA_UID_ROOT,
    dicom: {
      directory: DICOM_DIRECTORY,
      fileNames: sliceFileNames,
      sopClassUid: CT_IMAGE_STORAGE,
      transferSyntaxUid: EXPLICIT_VR_LITTLE_ENDIAN,
      rescaleInterceptHu: RESCALE_INTERCEPT_HU,
      patientName: INVENTED_PATIENT.patientName,
      patientId: INVENTED_PATIENT.patientId,
    },
    labelMapFileName: LABEL_MAP_FILE_NAME,
    labelsFileName: LABELS_FILE_NAME,
  });
  return { slices, sliceFileNames, labelMapNiftiGz, labels, manifest };
}

/**
 * The manifest's analytic volumes hold only for shapes painted whole: refuses a design in which
 * a later layer covers part of one, or the grid cuts it.
 */
function checkAnalyticShapesIntact(
  grid: Readonly<CtGrid>,
  phantom: Phantom,
  labels: Uint8Array,
  labelCounts: readonly number[],
): void {
  for (const structure of phantom.structures) {
    if (!structure.analyticShape) continue;
    const solid = solidOf(structure.analyticShape);
    const first = voxelCentreLps(grid, 0, 0, 0);
    const last = voxelCentreLps(grid, grid.columns - 1, grid.rows - 1, grid.slices - 1);
    const isWithinGrid = [0, 1, 2].every(
      (axis) => solid.boundsMm.min[axis] >= first[axis] && solid.boundsMm.max[axis] <= last[axis],
    );
    if (!isWithinGrid) throw new Error(`${structure.name}: its shape reaches beyond the grid.`);
    let inside = 0;
    let labelled = 0;
    forEachVoxelInside(grid, solid, (offset) => {
      inside++;
      if (labels[offset] === structure.labelValue) labelled++;
    });
    if (labelled !== inside || labelled !== labelCounts[structure.labelValue]) {
      throw new Error(
        `${structure.name}: ${labelled} of the ${inside} voxels inside its shape carry its ` +
          `label, and ${labelCounts[structure.labelValue]} voxels in all; its shape must be ` +
          'painted whole.',
      );
    }
  }
}
