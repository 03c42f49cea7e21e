/**
 * The calibrated heating of one applicator profile: what `calibrateApplicatorProfile` fits to
 * the profile's zone table and what a plan's physics zone then uses. Plain data (JSON), stored
 * per profile version by the server.
 *
 * The absorbed power is η(P)·P with η(P) = η·(P/P_ref)^γ: η is the coupling efficiency at the
 * reference power P_ref (the geometric mean of the table's powers), γ lets the share absorbed
 * change with power. The linear Pennes model grows a zone only about logarithmically with the
 * power (perfusion carries the heat away), while zone tables, measured with water vapour,
 * charring and perfusion shutdown at work, grow faster; γ takes up that difference, within the
 * table's range of powers only (the engine refuses powers outside the table). The heating lies
 * along a segment `heatingLengthMm` long that begins `segmentOffsetMm` behind the tip, so that
 * the zone's length, width and centre can each follow the table.
 */
import type { Vec3 } from '../geometry/vector';
import type { ZoneApplicator } from './applicator-heating';

export interface HeatingParameters {
  /** Coupling efficiency η at the reference power: the share of it the tissue absorbs. */
  couplingEfficiency: number;
  /** γ in η(P) = η·(P/P_ref)^γ (no unit); 0 absorbs the same share at every power. */
  powerExponent: number;
  /** P_ref, watts. */
  referencePowerW: number;
  /** Length of the heating segment, millimetres. */
  heatingLengthMm: number;
  /** Where the heating segment begins behind the tip, millimetres (negative: beyond the tip). */
  segmentOffsetMm: number;
}

/** η(P) = η·(P/P_ref)^γ, no unit, for a generator power in watts. */
export function couplingEfficiencyAt(heating: Readonly<HeatingParameters>, powerW: number): number {
  return heating.couplingEfficiency * (powerW / heating.referencePowerW) ** heating.powerExponent;
}

/**
 * The zone model's view of one applicator of a plan: tip and entry (LPS, millimetres), the
 * generator's power (W) and time (s), heated as `heating` says.
 */
export function zoneApplicatorOf(
  heating: Readonly<HeatingParameters>,
  placement: { tipLps: Vec3; entryLps: Vec3; powerW: number; timeS: number },
): ZoneApplicator {
  return {
    tipLps: placement.tipLps,
    entryLps: placement.entryLps,
    powerW: placement.powerW,
    timeS: placement.timeS,
    activeLengthMm: heating.heatingLengthMm,
    segmentOffsetMm: heating.segmentOffsetMm,
    calibration: couplingEfficiencyAt(heating, placement.powerW),
  };
}

/**
 * Throws a RangeError naming the field unless η, P_ref and the heating length are positive and
 * γ and the offset finite. `label` names the parameters in the message.
 */
export function checkHeatingParameters(heating: Readonly<HeatingParameters>, label: string): void {
  for (const name of ['couplingEfficiency', 'referencePowerW', 'heatingLengthMm'] as const) {
    if (!(heating[name] > 0) || !Number.isFinite(heating[name])) {
      throw new RangeError(`${label}.${name} must be a positive number, got ${heating[name]}`);
    }
  }
  for (const name of ['powerExponent', 'segmentOffsetMm'] as const) {
    if (!Number.isFinite(heating[name])) {
      throw new RangeError(`${label}.${name} must be a finite number, got ${heating[name]}`);
    }
  }
}
