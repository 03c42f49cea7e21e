/**
 * Whether a calibration is physically believable. A fit can match a table with parameters no
 * applicator has: less than a tenth of the generator's power absorbed (the table's zones are
 * far smaller than the model's liver gives), more than all of it (larger than any coupling
 * could heat), or a parameter pushed against the end of its range (the table is out of the
 * model's reach in that direction). Such a calibration never lets the physics zone decide.
 */
import {
  PARAMETER_NAMES,
  type CalibrationModel,
  type ParameterVector,
  type RowSizes,
} from './calibration-model';
import { couplingEfficiencyAt } from './heating-parameters';

/**
 * Coupling efficiencies taken as plausible. Above 1 the tissue would absorb more than the
 * generator gives; microwave and RF systems deliver most but never all of their power (cable,
 * reflection and electrode losses), and a share under 0.1 would mean most of it lost: our
 * working limits, not a published figure.
 */
export const PLAUSIBLE_COUPLING_EFFICIENCY: readonly [number, number] = [0.1, 1];

/** A parameter within this share of its range from an end is taken as sitting at the end. */
const AT_LIMIT_SHARE = 1e-3;

/** Whether any fitted parameter sits at an end of its range. */
export function isAtRangeLimit(model: CalibrationModel, x: Readonly<ParameterVector>): boolean {
  return atLimit(model, x).length > 0;
}

/** The reasons the calibration is implausible, in words; empty when it is plausible. */
export function implausibilityReasons(
  model: CalibrationModel,
  x: Readonly<ParameterVector>,
  sizes: readonly RowSizes[],
  table: readonly { powerW: number; timeS: number }[],
): string[] {
  const reasons: string[] = [];
  const heating = model.heatingOf(x);
  const powers = table.map((row) => row.powerW);
  const [lowest, highest] = PLAUSIBLE_COUPLING_EFFICIENCY;
  for (const powerW of new Set([Math.min(...powers), Math.max(...powers)])) {
    const efficiency = couplingEfficiencyAt(heating, powerW);
    if (efficiency < lowest) {
      reasons.push(
        `coupling efficiency ${efficiency.toFixed(3)} at ${powerW} W, below ${lowest}: the ` +
          'table’s zones are smaller than the model gives for that power',
      );
    } else if (efficiency > highest) {
      reasons.push(
        `coupling efficiency ${efficiency.toFixed(2)} at ${powerW} W, above ${highest}: the ` +
          'table’s zones are larger than the whole generator power could heat',
      );
    }
  }
  for (const index of atLimit(model, x)) {
    const value = index === 0 ? Math.exp(x[index]) : x[index];
    reasons.push(
      `${PARAMETER_NAMES[index]} at the end of its range (${value.toFixed(index === 0 ? 3 : 1)})`,
    );
  }
  const withoutZone = table.filter((_, index) => !sizes[index].hasZone);
  if (withoutZone.length > 0) {
    reasons.push(
      'no zone at ' + withoutZone.map((row) => `${row.powerW} W for ${row.timeS} s`).join(', '),
    );
  }
  return reasons;
}

function atLimit(model: CalibrationModel, x: Readonly<ParameterVector>): number[] {
  return x.flatMap((value, index) => {
    if (!model.isFree[index]) return [];
    const span = model.upperBounds[index] - model.lowerBounds[index];
    const isAtEnd =
      value - model.lowerBounds[index] <= AT_LIMIT_SHARE * span ||
      model.upperBounds[index] - value <= AT_LIMIT_SHARE * span;
    return isAtEnd ? [index] : [];
  });
}
