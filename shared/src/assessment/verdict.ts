/**
 * The verdict: the safety profile's rules applied to the assessment's figures,
 * each reason naming its rule, the kind concerned, the value against the threshold and a
 * message with units. Any refusal makes the plan not acceptable; otherwise any caution makes
 * it acceptable with cautions.
 *
 * Figures read from the label map carry a conservative bound (clearances, margins, the
 * parenchyma before the tumour, heat-sink calibre and gap). Each rule is judged on the nominal
 * value first, as before; where the nominal value meets the rule but the bound does not, the
 * rule gives a caution saying the figure cannot be confirmed at this slice thickness, with
 * both values and the threshold (`bound` holds the bounding value). Never silent. The thresholds, and where they come from, belong to the editable
 * safety profile (safety-profiles.ts); nothing here is a clinical decision — the treating team,
 * local protocols and licensed practice decide (`clinicalCaution`).
 */
import type {
  ApplicatorSafety,
  HeatSinkVessel,
  Verdict,
  VerdictReason,
  ZoneAssessment,
  ZoneModel,
  ApplicatorRehearsal,
} from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import type { StructureKind } from '../api/structures';
import {
  applicatorName,
  cannotBeConfirmed,
  degrees,
  kindName,
  mm,
  type UnconfirmedFigure,
} from './verdict-words';
import { verdictRules } from './verdict-rules';
import { coverageReasons, heatSinkReasons } from './verdict-zone-reasons';

export { verdictRules };

/** What the verdict weighs. */
export interface VerdictFigures {
  applicators: readonly ApplicatorSafety[];
  /** For each applicator, its path samples beyond the series grid. */
  samplesOutsideSeries: readonly number[];
  /** The coverage of the zone the verdict uses (the primary zone model). */
  zone: ZoneAssessment;
  heatSinks: readonly HeatSinkVessel[];
  /** Zone models whose zone reaches the edge of the grid it was computed on. */
  cutZoneModels: readonly ZoneModel[];
  /** The insertion rehearsal of each applicator rehearsed (absent or empty: not judged). */
  rehearsal?: readonly ApplicatorRehearsal[];
}

/** The verdict on the figures under the safety profile. */
export function judgePlan(figures: VerdictFigures, profile: SafetyProfileBody): Verdict {
  const reasons: VerdictReason[] = [];
  figures.applicators.forEach((applicator, index) => {
    reasons.push(...trajectoryReasons(applicator, index, figures.applicators.length, profile));
    const outside = figures.samplesOutsideSeries[index] ?? 0;
    if (outside > 0) {
      reasons.push({
        rule: verdictRules.pathBeyondSeries,
        kind: null,
        value: outside,
        threshold: 0,
        severity: 'caution',
        message:
          `${applicatorName(index, figures.applicators.length)}: ${outside} of its path samples ` +
          '(every ≤ 0.5 mm) lie beyond the series; what lies there is not checked.',
      });
    }
  });
  reasons.push(...coverageReasons(figures.zone, profile));
  reasons.push(...heatSinkReasons(figures.heatSinks, figures.zone.model, profile));
  for (const model of figures.cutZoneModels) {
    reasons.push({
      rule: verdictRules.zoneCut,
      kind: null,
      value: 1,
      threshold: 0,
      severity: 'caution',
      message:
        `The ${model} zone reaches the edge of the grid it was computed on; its volume and ` +
        'the figures drawn from it may be understated.',
    });
  }
  reasons.push(...rehearsalReasons(figures.rehearsal ?? [], figures.applicators.length, profile));
  return { level: levelOf(reasons), reasons };
}

/**
 * The rehearsal's rules: a caution when the robot-assisted tip error exceeds the profile's
 * tolerance; a refusal when even the assisted insertion ends outside the tumour. Both are
 * simulation estimates (the message says so).
 */
function rehearsalReasons(
  rehearsal: readonly ApplicatorRehearsal[],
  count: number,
  profile: SafetyProfileBody,
): VerdictReason[] {
  const reasons: VerdictReason[] = [];
  const toleranceMm = profile.rehearsalToleranceMm ?? 2;
  for (const entry of rehearsal) {
    const name = applicatorName(entry.applicatorIndex, count);
    if (!entry.reached) {
      reasons.push({
        rule: verdictRules.rehearsalUnreachable,
        kind: null,
        value: entry.assistedTipErrorMm ?? entry.freehandTipErrorMm,
        threshold: toleranceMm,
        severity: 'refusal',
        message: [
          `${name}: in the insertion rehearsal even the robot-assisted needle does not reach the tumour.`,
          entry.notReachedReason,
          'A simulation estimate: the treating team decides.',
        ]
          .filter(Boolean)
          .join(' '),
      });
    } else if (entry.assistedTipErrorMm !== null && entry.assistedTipErrorMm > toleranceMm) {
      reasons.push({
        rule: verdictRules.rehearsalTipError,
        kind: null,
        value: entry.assistedTipErrorMm,
        threshold: toleranceMm,
        severity: 'caution',
        message:
          `${name}: in the insertion rehearsal the robot-assisted tip ends ` +
          `${mm(entry.assistedTipErrorMm)} from the target, above the ${mm(toleranceMm)} ` +
          'tolerance. A simulation estimate: the treating team decides.',
      });
    }
  }
  return reasons;
}

function levelOf(reasons: readonly VerdictReason[]): Verdict['level'] {
  if (reasons.some((reason) => reason.severity === 'refusal')) return 'not-acceptable';
  return reasons.length > 0 ? 'acceptable-with-cautions' : 'acceptable';
}

function trajectoryReasons(
  applicator: ApplicatorSafety,
  index: number,
  count: number,
  profile: SafetyProfileBody,
): VerdictReason[] {
  const name = applicatorName(index, count);
  const reasons: VerdictReason[] = [];
  const ruleOf = new Map(profile.structureRules.map((rule) => [rule.kind, rule]));
  const criticalTraversed = new Set<StructureKind>();
  for (const structure of applicator.traversed) {
    const rule = ruleOf.get(structure.kind);
    if (!structure.critical || !rule) continue;
    criticalTraversed.add(structure.kind);
    reasons.push({
      rule: verdictRules.criticalTraversal,
      kind: structure.kind,
      value: structure.lengthMm,
      threshold: 0,
      severity: 'refusal',
      message:
        `${name} runs ${mm(structure.lengthMm)} through the ${kindName(structure.kind)}, which ` +
        `the safety profile marks critical (${rule.source}).`,
    });
  }
  for (const clearance of applicator.clearances) {
    const rule = ruleOf.get(clearance.kind);
    if (!rule || rule.minimumClearanceMm <= 0 || criticalTraversed.has(clearance.kind)) continue;
    const distanceMm = clearance.minDistanceMm;
    const boundMm = Math.min(distanceMm, clearance.lowerBoundMm ?? distanceMm);
    const minimumMm = rule.minimumClearanceMm;
    const unconfirmed = (requirement: string): UnconfirmedFigure => ({
      figure: `${name}'s clearance to the ${kindName(clearance.kind)}`,
      nominal: distanceMm,
      bound: boundMm,
      allowance: 'its surface a voxel nearer than labelled',
      requirement,
      source: rule.source,
    });
    if (distanceMm < minimumMm) {
      const isRefusal = rule.isCritical && distanceMm < minimumMm / 2;
      reasons.push({
        rule: isRefusal ? verdictRules.criticalClearance : verdictRules.clearance,
        kind: clearance.kind,
        value: distanceMm,
        bound: boundMm,
        threshold: isRefusal ? minimumMm / 2 : minimumMm,
        severity: isRefusal ? 'refusal' : 'caution',
        message:
          `${name} passes ${mm(distanceMm)} from the ${kindName(clearance.kind)} ` +
          `(${mm(clearance.atMm)} from the entry${boundMm < distanceMm ? `; as little as ${mm(boundMm)} allowing its surface a voxel nearer` : ''}); ` +
          `the safety profile asks for at least ${mm(minimumMm)}` +
          (isRefusal ? `, and a critical kind may not be approached within half of it` : '') +
          ` (${rule.source}).`,
      });
    } else if (boundMm < minimumMm) {
      reasons.push({
        rule: verdictRules.clearance,
        kind: clearance.kind,
        value: distanceMm,
        bound: boundMm,
        threshold: minimumMm,
        severity: 'caution',
        message: cannotBeConfirmed(unconfirmed(`a clearance of at least ${mm(minimumMm)}`)),
      });
    }
    // A critical kind's half-minimum rule, met by the nominal clearance but not by its bound.
    if (rule.isCritical && distanceMm >= minimumMm / 2 && boundMm < minimumMm / 2) {
      reasons.push({
        rule: verdictRules.criticalClearance,
        kind: clearance.kind,
        value: distanceMm,
        bound: boundMm,
        threshold: minimumMm / 2,
        severity: 'caution',
        message: cannotBeConfirmed(
          unconfirmed(`keeping a critical kind beyond half its minimum, ${mm(minimumMm / 2)},`),
        ),
      });
    }
  }
  if (applicator.pathLengthMm > applicator.workingLengthMm) {
    reasons.push({
      rule: verdictRules.workingLength,
      kind: null,
      value: applicator.pathLengthMm,
      threshold: applicator.workingLengthMm,
      severity: 'refusal',
      message:
        `${name}: the path from entry to tip is ${mm(applicator.pathLengthMm)}, longer than the ` +
        `applicator's working length of ${mm(applicator.workingLengthMm)}.`,
    });
  }
  if (applicator.angulationDeg > profile.maximumAngulationDeg) {
    reasons.push({
      rule: verdictRules.angulation,
      kind: null,
      value: applicator.angulationDeg,
      threshold: profile.maximumAngulationDeg,
      severity: 'caution',
      message:
        `${name} is angled ${degrees(applicator.angulationDeg)} from the axial plane; the ` +
        `safety profile accepts up to ${degrees(profile.maximumAngulationDeg)} ` +
        `(${profile.angulationSource}).`,
    });
  }
  if (applicator.capsuleCrossings > profile.maximumCapsuleCrossings) {
    reasons.push({
      rule: verdictRules.capsuleCrossings,
      kind: 'liver',
      value: applicator.capsuleCrossings,
      threshold: profile.maximumCapsuleCrossings,
      severity: 'caution',
      message:
        `${name} crosses the liver surface ${applicator.capsuleCrossings} times; the safety ` +
        `profile accepts up to ${profile.maximumCapsuleCrossings} (${profile.capsuleSource}).`,
    });
  }
  const parenchymaMm = applicator.parenchymaBeforeTumourMm;
  const parenchymaMinimumMm = profile.minimumParenchymaBeforeTumourMm;
  if (parenchymaMm !== null) {
    const boundMm = Math.min(
      parenchymaMm,
      applicator.parenchymaBeforeTumourLowerMm ?? parenchymaMm,
    );
    if (parenchymaMm < parenchymaMinimumMm) {
      reasons.push({
        rule: verdictRules.parenchymaBeforeTumour,
        kind: 'liver',
        value: parenchymaMm,
        bound: boundMm,
        threshold: parenchymaMinimumMm,
        severity: 'caution',
        message:
          `${name} crosses ${mm(parenchymaMm)} of liver parenchyma before the tumour; the ` +
          `safety profile asks for at least ${mm(parenchymaMinimumMm)} ` +
          `(${profile.parenchymaSource}).`,
      });
    } else if (boundMm < parenchymaMinimumMm) {
      reasons.push({
        rule: verdictRules.parenchymaBeforeTumour,
        kind: 'liver',
        value: parenchymaMm,
        bound: boundMm,
        threshold: parenchymaMinimumMm,
        severity: 'caution',
        message: cannotBeConfirmed({
          figure: `The liver parenchyma ${name.replace(/^The /, 'the ')} crosses before the tumour`,
          nominal: parenchymaMm,
          bound: boundMm,
          allowance: 'the liver and tumour surfaces a voxel off along the path',
          requirement: `at least ${mm(parenchymaMinimumMm)}`,
          source: profile.parenchymaSource,
        }),
      });
    }
  }
  return reasons;
}
