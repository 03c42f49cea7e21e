/**
 * The zone model run for one applicator alone in homogeneous liver (no heat sink), the shaft
 * along a grid axis — what a zone table describes. Used by the calibration.
 *
 * The zone is symmetric about the shaft, so only one quarter is simulated: the shaft runs along
 * +z through the corner of the voxels, and the walls x = 0 and y = 0 are insulated mirror
 * planes. Rows of one power share a run: the zone at a shorter time is read at the end of an
 * earlier phase of the same heating. The quarter is mirrored back before measuring, so the
 * sizes are those of `measureZoneAlongShaft` on the whole zone.
 */
import type { GridDimensions, VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { applicatorPowerDensity, checkZoneApplicator } from './applicator-heating';
import type { WallConditions } from './bioheat-grid';
import { solvePennesTransient, type HeatingPhase } from './pennes-solver';
import { ZONE_MODEL } from './simulate-zone';
import { measureZoneAlongShaft, zoneSurfacePoints, type ShaftZoneSize } from './zone-measurement';

/** Spacing of the calibration grid, millimetres: the coarse end of the planning crop grids. */
export const CALIBRATION_SPACING_MM = 2;

/**
 * Liver between the zone's expected edge and a wall of the grid, millimetres: over 3 perfusion
 * lengths (4.4 mm), so that the wall held at 37 °C moves the zone's edge by well under a tenth
 * of a millimetre. A run whose zone reaches a wall anyway is repeated on a grid grown by half.
 */
export const CALIBRATION_MARGIN_MM = 15;

/** A heating to simulate: power (W) and time (s), with the zone it should roughly give. */
export interface HomogeneousZoneRow {
  powerW: number;
  timeS: number;
  /** Expected zone, to size the grid (millimetres); without it the grid starts at 40 × 30 mm. */
  expectedLengthMm?: number;
  expectedWidthMm?: number;
  expectedTipOffsetMm?: number;
}

/** Options of a homogeneous-zone run. */
export interface HomogeneousZoneOptions {
  /** Grid spacing, millimetres (default `CALIBRATION_SPACING_MM`). */
  spacingMm?: number;
  /** Where the heating segment begins behind the tip, millimetres (default 0). */
  segmentOffsetMm?: number;
  shouldAbort?: () => boolean;
}

const TIP: Vec3 = [0, 0, 0];
/** Any point on +z: the shaft runs from the tip towards +z (z = distance behind the tip). */
const ENTRY: Vec3 = [0, 0, 100];
const QUARTER_WALLS: WallConditions = {
  iLow: 'insulated',
  iHigh: 'body-temperature',
  jLow: 'insulated',
  jHigh: 'body-temperature',
  kLow: 'body-temperature',
  kHigh: 'body-temperature',
};
const MAX_GROWTHS = 4;

/**
 * Zone sizes (length along the shaft, width across it, centre behind the tip; millimetres) of
 * an applicator with the given heating length (mm, from `segmentOffsetMm` behind the tip) and
 * coupling efficiency `parameter`, for each row's power (W) and time (s), in homogeneous liver.
 * Answers in the order of `rows`.
 */
export function homogeneousZoneSizes(
  activeLengthMm: number,
  rows: readonly Readonly<HomogeneousZoneRow>[],
  parameter: number,
  options: Readonly<HomogeneousZoneOptions> = {},
): ShaftZoneSize[] {
  const spacingMm = options.spacingMm ?? CALIBRATION_SPACING_MM;
  if (!(spacingMm > 0) || !Number.isFinite(spacingMm)) {
    throw new RangeError(`spacingMm must be a positive number, got ${spacingMm}`);
  }
  const segmentOffsetMm = options.segmentOffsetMm ?? 0;
  rows.forEach((row, index) =>
    checkZoneApplicator(
      {
        entryLps: ENTRY,
        tipLps: TIP,
        activeLengthMm,
        segmentOffsetMm,
        powerW: row.powerW,
        timeS: row.timeS,
        calibration: parameter,
      },
      `rows[${index}]`,
    ),
  );
  const sizes: ShaftZoneSize[] = new Array<ShaftZoneSize>(rows.length);
  const powers = [...new Set(rows.map((row) => row.powerW))];
  for (const powerW of powers) {
    const members = rows.flatMap((row, index) => (row.powerW === powerW ? [index] : []));
    let extent = expectedExtent(
      activeLengthMm,
      segmentOffsetMm,
      members.map((index) => rows[index]),
    );
    for (let growth = 0; ; growth++) {
      const found = runPowerGroup(
        { activeLengthMm, segmentOffsetMm },
        powerW,
        members.map((index) => rows[index].timeS),
        parameter,
        spacingMm,
        extent,
        options.shouldAbort,
      );
      const touches = found.some((size) => size.touchesGridWall);
      if (!touches || growth === MAX_GROWTHS) {
        members.forEach((rowIndex, member) => (sizes[rowIndex] = found[member]));
        break;
      }
      extent = grown(extent, found);
    }
  }
  return sizes;
}

/** Half-width across the shaft and the span along it (behind the tip, mm) the grid must hold. */
interface ZoneExtent {
  radiusMm: number;
  behindMinMm: number;
  behindMaxMm: number;
}

function expectedExtent(
  activeLengthMm: number,
  segmentOffsetMm: number,
  rows: readonly Readonly<HomogeneousZoneRow>[],
): ZoneExtent {
  let radiusMm = 0;
  let behindMinMm = Math.min(0, segmentOffsetMm);
  let behindMaxMm = Math.max(0, segmentOffsetMm + activeLengthMm);
  const middleMm = segmentOffsetMm + activeLengthMm / 2;
  for (const row of rows) {
    const lengthMm = row.expectedLengthMm ?? 40;
    const widthMm = row.expectedWidthMm ?? 30;
    radiusMm = Math.max(radiusMm, widthMm / 2);
    // The model's zone sits about the middle of the heating segment; the table's where it says.
    for (const centreMm of [middleMm, row.expectedTipOffsetMm ?? middleMm]) {
      behindMinMm = Math.min(behindMinMm, centreMm - lengthMm / 2);
      behindMaxMm = Math.max(behindMaxMm, centreMm + lengthMm / 2);
    }
  }
  return { radiusMm, behindMinMm, behindMaxMm };
}

/** The extent grown to hold the zones found, and by half again. */
function grown(extent: ZoneExtent, found: readonly ShaftZoneSize[]): ZoneExtent {
  let { radiusMm, behindMinMm, behindMaxMm } = extent;
  for (const size of found) {
    radiusMm = Math.max(radiusMm, size.widthMm / 2);
    const centreMm = size.tipOffsetMm ?? 0;
    behindMinMm = Math.min(behindMinMm, centreMm - size.lengthMm / 2);
    behindMaxMm = Math.max(behindMaxMm, centreMm + size.lengthMm / 2);
  }
  const middleMm = (behindMinMm + behindMaxMm) / 2;
  const halfSpanMm = (behindMaxMm - behindMinMm) / 2;
  return {
    radiusMm: radiusMm * 1.5 + CALIBRATION_MARGIN_MM / 2,
    behindMinMm: middleMm - halfSpanMm * 1.5 - CALIBRATION_MARGIN_MM / 2,
    behindMaxMm: middleMm + halfSpanMm * 1.5 + CALIBRATION_MARGIN_MM / 2,
  };
}

/** Simulates one power for the longest of the times and reads the zone at each of them. */
function runPowerGroup(
  segment: { activeLengthMm: number; segmentOffsetMm: number },
  powerW: number,
  timesS: readonly number[],
  parameter: number,
  spacingMm: number,
  extent: ZoneExtent,
  shouldAbort: (() => boolean) | undefined,
): ShaftZoneSize[] {
  const h = spacingMm;
  const radialVoxels = Math.ceil((extent.radiusMm + CALIBRATION_MARGIN_MM) / h);
  // Voxel centres at z = (m + ½)·h keep the lattice fixed against the tip whatever the extent.
  const firstSlice = Math.floor((extent.behindMinMm - CALIBRATION_MARGIN_MM) / h);
  const lastSlice = Math.ceil((extent.behindMaxMm + CALIBRATION_MARGIN_MM) / h);
  const dimensions: GridDimensions = [radialVoxels, radialVoxels, lastSlice - firstSlice + 1];
  const quarter: VolumeGeometry = {
    dimensions,
    spacingMm: [h, h, h],
    originLps: [h / 2, h / 2, (firstSlice + 0.5) * h],
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };
  const source = applicatorPowerDensity(quarter, {
    entryLps: ENTRY,
    tipLps: TIP,
    ...segment,
    powerW,
    timeS: Math.max(...timesS),
    calibration: parameter,
  }).powerDensityWPerM3;
  const sortedTimesS = [...new Set(timesS)].sort((a, b) => a - b);
  const phases: HeatingPhase[] = sortedTimesS.map((timeS, index) => ({
    durationS: timeS - (index === 0 ? 0 : sortedTimesS[index - 1]),
    powerDensityWPerM3: source,
  }));
  const sizeAt = new Map<number, ShaftZoneSize>();
  solvePennesTransient({
    grid: { dimensions, spacingMm: quarter.spacingMm },
    tissue: ZONE_MODEL.tissue,
    arrhenius: ZONE_MODEL.arrhenius,
    perfusionModel: ZONE_MODEL.perfusionModel,
    arrheniusReference: ZONE_MODEL.arrheniusReference,
    walls: QUARTER_WALLS,
    phases,
    shouldAbort,
    onPhaseEnd: (phaseIndex, fields) => {
      const { omega, geometry } = mirroredQuarter(fields.omega, quarter);
      sizeAt.set(
        sortedTimesS[phaseIndex],
        measureZoneAlongShaft(zoneSurfacePoints(omega, geometry), TIP, ENTRY),
      );
    },
  });
  return timesS.map((timeS) => {
    const size = sizeAt.get(timeS);
    if (size === undefined) throw new Error(`no zone was read at ${timeS} s`);
    return size;
  });
}

/** The whole field from the quarter x, y > 0: mirrored in the planes x = 0 and y = 0. */
function mirroredQuarter(
  quarterOmega: Float64Array,
  quarter: VolumeGeometry,
): { omega: Float64Array; geometry: VolumeGeometry } {
  const [n, , nz] = quarter.dimensions;
  const h = quarter.spacingMm[0];
  const full = 2 * n;
  const omega = new Float64Array(full * full * nz);
  for (let k = 0; k < nz; k++) {
    for (let j = 0; j < full; j++) {
      const quarterJ = j >= n ? j - n : n - 1 - j;
      for (let i = 0; i < full; i++) {
        const quarterI = i >= n ? i - n : n - 1 - i;
        omega[i + full * (j + full * k)] = quarterOmega[quarterI + n * (quarterJ + n * k)];
      }
    }
  }
  return {
    omega,
    geometry: {
      ...quarter,
      dimensions: [full, full, nz],
      originLps: [-(n - 0.5) * h, -(n - 0.5) * h, quarter.originLps[2]],
    },
  };
}
