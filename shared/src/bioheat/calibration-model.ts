/**
 * The zone model as the calibration sees it: the parameter vector x = (ln η, γ, heating length,
 * segment offset) mapped to the length, width and centre of the zone of every zone table row in
 * homogeneous liver, with the simulations kept.
 *
 * Two facts keep the fits cheap. A row's zone depends only on the power absorbed at its power
 * and on the heating length, so the rows of one power share a run (`homogeneousZoneSizes`) and
 * every run is cached by (power, absorbed power, length): a leave-one-out refit that comes back
 * to a point already simulated costs nothing. And in homogeneous liver moving the heating
 * segment along the shaft moves the zone with it, so the offset is never simulated: runs start
 * the segment at the tip and the offset is added to the centre (within the sub-voxel shift of
 * the lattice, checked in calibration.spec.ts).
 */
import type { ZoneTableRow } from '../api/applicator-profiles';
import type { HeatingParameters } from './heating-parameters';
import { homogeneousZoneSizes, type HomogeneousZoneOptions } from './homogeneous-zone';

export const LOG_EFFICIENCY = 0;
export const POWER_EXPONENT = 1;
export const HEATING_LENGTH = 2;
export const SEGMENT_OFFSET = 3;
export const PARAMETER_NAMES = [
  'coupling efficiency',
  'power exponent',
  'heating length',
  'segment offset',
] as const;

/** (ln η, γ, heating length mm, segment offset mm). */
export type ParameterVector = [number, number, number, number];

/** The model's zone of one row with the segment starting at the tip; millimetres. */
export interface RowSizes {
  lengthMm: number;
  widthMm: number;
  /** Centre behind the tip; the segment's middle when there is no zone. */
  centreMm: number;
  hasZone: boolean;
}

/** Steps of the finite differences: 3 % in absorbed power, half a millimetre in length. */
const LOG_POWER_STEP = 0.03;
const LENGTH_STEP_MM = 0.5;

export class CalibrationModel {
  /** P_ref: the geometric mean of the table's powers, W (decouples η from γ). */
  readonly referencePowerW: number;
  readonly lowerBounds: ParameterVector;
  readonly upperBounds: ParameterVector;
  /** γ is fitted only when the table holds more than one power. */
  readonly isFree: boolean[];
  /** Runs of `homogeneousZoneSizes`, one per power group and parameter point. */
  simulations = 0;
  private readonly powers: number[];
  private readonly groupOfRow: number[];
  private readonly cache = new Map<string, RowSizes[]>();

  constructor(
    private readonly table: readonly ZoneTableRow[],
    activeLengthMm: number,
    private readonly options: Readonly<HomogeneousZoneOptions>,
  ) {
    this.powers = [...new Set(table.map((row) => row.powerW))];
    this.groupOfRow = table.map((row) => this.powers.indexOf(row.powerW));
    this.referencePowerW = Math.exp(
      this.powers.reduce((sum, powerW) => sum + Math.log(powerW), 0) / this.powers.length,
    );
    // Ranges: η from 0.002 to 2 (wide enough to show an implausible one), γ from −1 to 2, the
    // segment 2 mm to the profile's active length + 10 mm, starting within 10 mm of the tip:
    // the plan's physics grid is sized around the profile's active segment with 30 mm to
    // spare, so a segment in these bounds always lies inside it.
    this.lowerBounds = [Math.log(0.002), -1, 2, -10];
    this.upperBounds = [Math.log(2), 2, activeLengthMm + 10, 10];
    this.isFree = [true, this.powers.length > 1, true, true];
  }

  get rowCount(): number {
    return this.table.length;
  }

  /** The vector clamped into the bounds (γ held at 0 when it is not fitted). */
  clamp(x: readonly number[]): ParameterVector {
    return x.map((value, index) =>
      this.isFree[index]
        ? Math.min(this.upperBounds[index], Math.max(this.lowerBounds[index], value))
        : 0,
    ) as ParameterVector;
  }

  heatingOf(x: Readonly<ParameterVector>): HeatingParameters {
    return {
      couplingEfficiency: Math.exp(x[LOG_EFFICIENCY]),
      powerExponent: x[POWER_EXPONENT],
      referencePowerW: this.referencePowerW,
      heatingLengthMm: x[HEATING_LENGTH],
      segmentOffsetMm: x[SEGMENT_OFFSET],
    };
  }

  /** Sizes of every row at x (the offset aside), simulating only power groups not yet run. */
  sizesAt(x: Readonly<ParameterVector>): RowSizes[] {
    const lengthMm = x[HEATING_LENGTH];
    const perGroup = this.powers.map((powerW, group) => {
      const efficiency =
        Math.exp(x[LOG_EFFICIENCY]) * (powerW / this.referencePowerW) ** x[POWER_EXPONENT];
      const key = `${group}|${lengthMm}|${efficiency}`;
      let sizes = this.cache.get(key);
      if (sizes === undefined) {
        const members = this.table.filter((row) => row.powerW === powerW);
        sizes = homogeneousZoneSizes(
          lengthMm,
          members.map((row) => ({
            powerW,
            timeS: row.timeS,
            expectedLengthMm: row.zoneLengthMm,
            expectedWidthMm: row.zoneWidthMm,
          })),
          efficiency,
          { spacingMm: this.options.spacingMm, shouldAbort: this.options.shouldAbort },
        ).map((size) => ({
          lengthMm: size.lengthMm,
          widthMm: size.widthMm,
          centreMm: size.tipOffsetMm ?? lengthMm / 2,
          hasZone: size.tipOffsetMm !== null,
        }));
        this.cache.set(key, sizes);
        this.simulations++;
      }
      return sizes;
    });
    const taken = this.powers.map(() => 0);
    return this.groupOfRow.map((group) => perGroup[group][taken[group]++]);
  }

  /** Model − table for one row: length, width, centre (the offset added), millimetres. */
  rowResiduals(
    index: number,
    sizes: readonly RowSizes[],
    offsetMm: number,
  ): [number, number, number] {
    const row = this.table[index];
    const size = sizes[index];
    return [
      size.lengthMm - row.zoneLengthMm,
      size.widthMm - row.zoneWidthMm,
      size.centreMm + offsetMm - row.tipOffsetMm,
    ];
  }

  /** Residuals of the rows in `included` (three a row), at the offset x[3]. */
  residuals(x: Readonly<ParameterVector>, sizes: readonly RowSizes[], included: readonly number[]) {
    return included.flatMap((index) => this.rowResiduals(index, sizes, x[SEGMENT_OFFSET]));
  }

  /**
   * The offset that best fits the centres of the rows in `included` for these sizes (their mean
   * gap, linear least squares), clamped into its bounds.
   */
  bestOffset(sizes: readonly RowSizes[], included: readonly number[]): number {
    const gaps = included.map((index) => this.table[index].tipOffsetMm - sizes[index].centreMm);
    const meanMm = gaps.reduce((sum, gap) => sum + gap, 0) / gaps.length;
    return Math.min(
      this.upperBounds[SEGMENT_OFFSET],
      Math.max(this.lowerBounds[SEGMENT_OFFSET], meanMm),
    );
  }

  /**
   * ∂(length, width, centre)/∂x of every row at x, by forward differences: one run with every
   * group's absorbed power raised by 3 % (a group's zone depends on its own power only, so that
   * one run gives ∂/∂ln η and, through ln(P/P_ref), ∂/∂γ) and one with the length 0.5 mm longer
   * (shorter at the upper bound). The offset enters the centre alone, with slope 1.
   */
  rowJacobians(x: Readonly<ParameterVector>, sizes: readonly RowSizes[]): number[][][] {
    const raised = this.sizesAt([
      x[LOG_EFFICIENCY] + LOG_POWER_STEP,
      x[POWER_EXPONENT],
      x[HEATING_LENGTH],
      x[SEGMENT_OFFSET],
    ]);
    const lengthStepMm =
      x[HEATING_LENGTH] + LENGTH_STEP_MM <= this.upperBounds[HEATING_LENGTH]
        ? LENGTH_STEP_MM
        : -LENGTH_STEP_MM;
    const longer = this.sizesAt([
      x[LOG_EFFICIENCY],
      x[POWER_EXPONENT],
      x[HEATING_LENGTH] + lengthStepMm,
      x[SEGMENT_OFFSET],
    ]);
    return sizes.map((size, index) => {
      const logPowerRatio = Math.log(this.table[index].powerW / this.referencePowerW);
      const quantities = (entry: RowSizes) => [entry.lengthMm, entry.widthMm, entry.centreMm];
      const base = quantities(size);
      const perLogPower = quantities(raised[index]).map(
        (value, quantity) => (value - base[quantity]) / LOG_POWER_STEP,
      );
      const perLength = quantities(longer[index]).map(
        (value, quantity) => (value - base[quantity]) / lengthStepMm,
      );
      return [0, 1, 2].map((quantity) => [
        perLogPower[quantity],
        this.isFree[POWER_EXPONENT] ? perLogPower[quantity] * logPowerRatio : 0,
        perLength[quantity],
        quantity === 2 ? 1 : 0,
      ]);
    });
  }
}
