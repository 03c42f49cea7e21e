/**
 * Turns an imported file into label values on the series' own grid, whichever form it takes: a
 * DICOM SEG (told by its `DICM` marker; read in a bounded worker, `DicomSegReader`) or a NIfTI-1
 * label map (.nii, or gzip-compressed .nii.gz). Both are refused unless they lie on the series'
 * grid; nothing is resampled.
 */
import type { SegmentOverlap, StructureSource, VolumeGeometry } from '@emberline/shared';
import type { ImageSeries } from '../imaging/image-series.entity';
import type { DicomSegment } from './dicom-seg-label-map';
import { isDicomPart10 } from './dicom-seg-label-map';
import type { DicomSegReader } from './dicom-seg-reader';
import { assertSameGrid } from './grid-match';
import { inflateIfGzip, readNiftiLabelMap } from './nifti-label-map';
import type { SegmentKindHints } from './segment-overlap';

/** Room a NIfTI file takes beyond its voxels: header, extensions (generous). */
const niftiOverheadBytes = 1_048_576;
/** The widest NIfTI voxel read (float64). */
const maxBytesPerVoxel = 8;

export interface DecodedLabelMap {
  source: StructureSource;
  /** Label values 0…65535 on the series' grid, i fastest. */
  labels: Uint16Array;
  /** A SEG's segments by number (names and suggested kinds); null for NIfTI. */
  segments: ReadonlyMap<number, DicomSegment> | null;
  /** A SEG's overlapping segments as resolved; empty for NIfTI (one label a voxel). */
  overlaps: SegmentOverlap[];
}

export function seriesGeometry(series: ImageSeries): VolumeGeometry {
  return {
    dimensions: series.dimensions,
    spacingMm: series.spacingMm,
    originLps: series.originLps,
    direction: series.direction,
  };
}

/** The label map of the file; throws a StructureRefusal naming what is wrong with it. */
export async function decodeLabelMap(
  file: Uint8Array,
  series: ImageSeries,
  segmentationReader: DicomSegReader,
  kindHints: SegmentKindHints,
): Promise<DecodedLabelMap> {
  const geometry = seriesGeometry(series);
  if (isDicomPart10(file)) {
    const read = await segmentationReader.read(file, geometry, kindHints);
    return {
      source: 'dicom-seg',
      labels: read.labels,
      segments: new Map(read.segments.map((segment) => [segment.segmentNumber, segment])),
      overlaps: read.overlaps,
    };
  }
  const [nx, ny, nz] = series.dimensions;
  const inflated = inflateIfGzip(file, niftiOverheadBytes + nx * ny * nz * maxBytesPerVoxel);
  const labelMap = readNiftiLabelMap(inflated);
  assertSameGrid(labelMap.geometry, geometry);
  return { source: 'nifti', labels: labelMap.labels, segments: null, overlaps: [] };
}
