/**
 * Live clearance of a drafted path, measured as the assessment measures it (the server's own
 * code, shared/src/geometry/cell-distance.ts): per structure kind its boundary voxels, packed
 * once from the series' label map, and for each path the exact distance to the faces of the
 * kind's voxels with its conservative bound (the voxels a voxel wider). Pure: runs in a Web
 * Worker or, failing one, on the page.
 */
import {
  boundaryVoxelsOfMask,
  boxGeometry,
  lengthInsideMask,
  packCells,
  segmentApproachToCells,
  voxelCount,
  vector3,
  type StructureKind,
  type Vec3,
  type VolumeGeometry,
  type VoxelBox,
} from '@emberline/shared';

/**
 * A path no closer than this to a kind (mm) reads "more than 30 mm": the figures list what a
 * path must avoid, and clearance rules of the trade lie well below it (common practice:
 * 5–10 mm).
 */
export const fieldPaddingMm = 30;

/** Kinds in the order the figures list them: what a path must avoid first. */
export const clearanceKindOrder: readonly StructureKind[] = [
  'hepatic-artery',
  'portal-vein',
  'hepatic-vein',
  'bile-duct',
  'gallbladder',
  'bowel',
  'stomach',
  'lung',
  'heart',
  'kidney',
  'bone',
  'tumour',
  'liver',
  'skin',
];

/** The label values of each kind, in `clearanceKindOrder`; kinds without a label left out. */
export function labelValuesByKind(
  structures: readonly { labelValue: number; kind: StructureKind | null }[],
): { kind: StructureKind; labelValues: number[] }[] {
  return clearanceKindOrder
    .map((kind) => ({
      kind,
      labelValues: structures
        .filter((structure) => structure.kind === kind)
        .map((structure) => structure.labelValue),
    }))
    .filter((entry) => entry.labelValues.length > 0);
}

export interface KindField {
  kind: StructureKind;
  /** The kind's boundary voxels on `maskGeometry`, packed for `segmentApproachToCells`. */
  cells: Int32Array;
  /** The kind's voxels on their tight bounding box, to measure the length run inside. */
  mask: Uint8Array;
  maskGeometry: VolumeGeometry;
  paddingMm: number;
  computeMs: number;
}

/** The tight box around the voxels whose label is one of `labelValues`, or null if none. */
function boundingBox(
  labels: Uint8Array | Uint16Array,
  dimensions: Readonly<[number, number, number]>,
  isOfKind: Uint8Array,
): VoxelBox | null {
  const [nx, ny] = dimensions;
  const low = [Infinity, Infinity, Infinity];
  const high = [-1, -1, -1];
  for (let index = 0; index < labels.length; index++) {
    if (!isOfKind[labels[index]]) continue;
    const i = index % nx;
    const j = Math.floor(index / nx) % ny;
    const k = Math.floor(index / (nx * ny));
    if (i < low[0]) low[0] = i;
    if (j < low[1]) low[1] = j;
    if (k < low[2]) low[2] = k;
    if (i > high[0]) high[0] = i;
    if (j > high[1]) high[1] = j;
    if (k > high[2]) high[2] = k;
  }
  if (high[0] < 0) return null;
  return {
    start: [low[0], low[1], low[2]],
    size: [high[0] - low[0] + 1, high[1] - low[1] + 1, high[2] - low[2] + 1],
  };
}

function cropMask(
  labels: Uint8Array | Uint16Array,
  dimensions: Readonly<[number, number, number]>,
  isOfKind: Uint8Array,
  box: VoxelBox,
): Uint8Array {
  const [nx, ny] = dimensions;
  const [sx, sy, sz] = box.size;
  const mask = new Uint8Array(sx * sy * sz);
  for (let k = 0; k < sz; k++) {
    for (let j = 0; j < sy; j++) {
      const from = box.start[0] + nx * (box.start[1] + j + ny * (box.start[2] + k));
      const to = sx * (j + sy * k);
      for (let i = 0; i < sx; i++) mask[to + i] = isOfKind[labels[from + i]];
    }
  }
  return mask;
}

/**
 * The measuring aids of one kind (its label values), or null when no voxel carries them.
 * `labels` is the series' label map (index i + nx·(j + ny·k)) on `geometry`.
 */
export function kindField(
  labels: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  kind: StructureKind,
  labelValues: readonly number[],
  paddingMm = fieldPaddingMm,
  now: () => number = () => performance.now(),
): KindField | null {
  const started = now();
  if (labels.length !== voxelCount(geometry.dimensions)) {
    throw new RangeError('the label map does not match the grid');
  }
  const isOfKind = new Uint8Array(65_536);
  for (const value of labelValues) isOfKind[value] = 1;
  const tight = boundingBox(labels, geometry.dimensions, isOfKind);
  if (!tight) return null;
  // Every voxel of the kind lies in its tight box: the box's grid measures them all.
  const mask = cropMask(labels, geometry.dimensions, isOfKind, tight);
  return {
    kind,
    cells: packCells(boundaryVoxelsOfMask(mask, tight.size), tight.size),
    mask,
    maskGeometry: boxGeometry(geometry, tight),
    paddingMm,
    computeMs: now() - started,
  };
}

export interface KindClearance {
  kind: StructureKind;
  /**
   * Closest approach of the path to the faces of the kind's voxels, mm (0 where it enters
   * them); null when beyond `paddingMm`.
   */
  clearanceMm: number | null;
  /** The least it could be, the kind's surface a voxel nearer than labelled, mm; null with it. */
  lowerBoundMm: number | null;
  /** True when the path comes no closer than `paddingMm` (the field's reach). */
  isBeyondReach: boolean;
  paddingMm: number;
  /** Where the closest approach lies, LPS, millimetres. */
  nearestLps: Vec3 | null;
  /** Length of the path inside the kind's voxels, mm. */
  insideMm: number;
}

/** The closest approach of the path from entry to target (LPS, millimetres) to one kind. */
export function kindClearance(
  field: KindField,
  entryLps: Readonly<Vec3>,
  targetLps: Readonly<Vec3>,
): KindClearance {
  const approach = segmentApproachToCells(field.maskGeometry, field.cells, entryLps, targetLps);
  const insideMm = lengthInsideMask(field.mask, field.maskGeometry, entryLps, targetLps);
  const isBeyondReach = approach === null || approach.distanceMm > field.paddingMm;
  const lengthMm = vector3.distance(entryLps, targetLps);
  const along = approach && lengthMm > 0 ? approach.atMm / lengthMm : 0;
  // A path running wholly inside the kind never meets a boundary voxel's cell from outside.
  const isInside = insideMm > 0;
  return {
    kind: field.kind,
    clearanceMm: isInside ? 0 : isBeyondReach ? null : approach.distanceMm,
    lowerBoundMm: isInside ? 0 : isBeyondReach ? null : approach.lowerBoundMm,
    isBeyondReach: !isInside && isBeyondReach,
    paddingMm: field.paddingMm,
    nearestLps:
      isBeyondReach || !approach
        ? null
        : vector3.addScaled(entryLps, vector3.subtract(targetLps, entryLps), along),
    insideMm,
  };
}

export interface PathFigures {
  /** Entry to target, mm. */
  lengthMm: number;
  /** Angle between the path and the axial plane (LPS z = const), degrees. */
  angleFromAxialDeg: number;
  clearances: KindClearance[];
}

/** Length, angulation and clearance to every kind whose field is ready. */
export function pathFigures(
  fields: readonly KindField[],
  entryLps: Readonly<Vec3>,
  targetLps: Readonly<Vec3>,
): PathFigures {
  const lengthMm = vector3.distance(entryLps, targetLps);
  const rise = Math.abs(targetLps[2] - entryLps[2]);
  const angleFromAxialDeg =
    lengthMm > 0 ? (Math.asin(Math.min(1, rise / lengthMm)) * 180) / Math.PI : 0;
  return {
    lengthMm,
    angleFromAxialDeg,
    clearances: fields.map((field) => kindClearance(field, entryLps, targetLps)),
  };
}
