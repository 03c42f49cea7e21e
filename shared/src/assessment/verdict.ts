/**
 * The verdict: the safety profile's rules applied to the assessment's figures,
 * each reason naming its rule, the kind concerned, the value against the threshold and a
 * message with units. Any refusal makes the plan not acceptable; otherwise any caution makes
 * it acceptable with cautions. The thresholds, and where they come from, belong to the editable
 * safety profile (safety-profiles.ts); nothing here is a clinical decision — the treating team,
 * local protocols and licensed practice decide (`clinicalCaution`).
 */
import type {
  ApplicatorSafety,
  HeatSinkVessel,
  Verdict,
  VerdictReason,
  VerdictSeverity,
  ZoneAssessment,
  ZoneModel,
} from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import { structureKindLabels, type StructureKind } from '../api/structures';
import { tumourName } from './tumour-label';

/** The rules and their identifiers in `VerdictReason.rule`. */
export const verdictRules = {
  /** A critical kind lies on the path: refusal. */
  criticalTraversal: 'critical-traversal',
  /** The path passes closer to a kind than its minimum clearance: caution. */
  clearance: 'clearance',
  /** … closer than half the minimum to a critical kind: refusal. */
  criticalClearance: 'critical-clearance',
  /** The path is longer than the applicator's working length: refusal. */
  workingLength: 'working-length',
  /** The path is steeper from the axial plane than the maximum: caution. */
  angulation: 'angulation',
  /** The path crosses the liver surface more often than the maximum: caution. */
  capsuleCrossings: 'capsule-crossings',
  /** Less parenchyma than the minimum before the tumour: caution. */
  parenchymaBeforeTumour: 'parenchyma-before-tumour',
  /** Part of a tumour lies outside the zone: refusal. */
  tumourCoverage: 'tumour-coverage',
  /** The minimal ablative margin is below the profile's minimum: refusal. */
  marginMinimum: 'margin-minimum',
  /** … at or above the minimum but below the target: caution. */
  marginTarget: 'margin-target',
  /** A heat-sink vessel lies beside the zone: caution. */
  heatSink: 'heat-sink',
  /** No tumour structure was found to assess coverage against: caution. */
  coverageNotAssessed: 'coverage-not-assessed',
  /** Part of the path lies beyond the series, unchecked: caution. */
  pathBeyondSeries: 'path-beyond-series',
  /** A zone reaches the edge of the grid it was computed on, its figures cut short: caution. */
  zoneCut: 'zone-cut',
} as const;

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
  for (const vessel of figures.heatSinks) {
    reasons.push({
      rule: verdictRules.heatSink,
      kind: vessel.kind,
      value: vessel.diameterMm,
      threshold: profile.heatSinkDiameterMm,
      severity: 'caution',
      message:
        `A ${kindName(vessel.kind)} ${mm(vessel.diameterMm)} wide lies ${mm(vessel.distanceMm)} ` +
        `from the ${figures.zone.model} zone (heat sink: at least ${mm(profile.heatSinkDiameterMm)}` +
        ` within ${mm(profile.heatSinkDistanceMm)}; ${profile.heatSinkSource}).`,
    });
  }
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
  return { level: levelOf(reasons), reasons };
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
    if (clearance.minDistanceMm >= rule.minimumClearanceMm) continue;
    const isRefusal = rule.isCritical && clearance.minDistanceMm < rule.minimumClearanceMm / 2;
    reasons.push({
      rule: isRefusal ? verdictRules.criticalClearance : verdictRules.clearance,
      kind: clearance.kind,
      value: clearance.minDistanceMm,
      threshold: isRefusal ? rule.minimumClearanceMm / 2 : rule.minimumClearanceMm,
      severity: isRefusal ? 'refusal' : 'caution',
      message:
        `${name} passes ${mm(clearance.minDistanceMm)} from the ${kindName(clearance.kind)} ` +
        `(${mm(clearance.atMm)} from the entry); the safety profile asks for at least ` +
        `${mm(rule.minimumClearanceMm)}` +
        (isRefusal ? `, and a critical kind may not be approached within half of it` : '') +
        ` (${rule.source}).`,
    });
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
  if (parenchymaMm !== null && parenchymaMm < profile.minimumParenchymaBeforeTumourMm) {
    reasons.push({
      rule: verdictRules.parenchymaBeforeTumour,
      kind: 'liver',
      value: parenchymaMm,
      threshold: profile.minimumParenchymaBeforeTumourMm,
      severity: 'caution',
      message:
        `${name} crosses ${mm(parenchymaMm)} of liver parenchyma before the tumour; the ` +
        `safety profile asks for at least ${mm(profile.minimumParenchymaBeforeTumourMm)} ` +
        `(${profile.parenchymaSource}).`,
    });
  }
  return reasons;
}

function coverageReasons(zone: ZoneAssessment, profile: SafetyProfileBody): VerdictReason[] {
  if (zone.tumours.length === 0) {
    return [
      {
        rule: verdictRules.coverageNotAssessed,
        kind: 'tumour',
        value: 0,
        threshold: 1,
        severity: 'caution',
        message:
          'No tumour structure is labelled on the series: coverage and margins were not assessed.',
      },
    ];
  }
  const reasons: VerdictReason[] = [];
  zone.tumours.forEach((tumour, index) => {
    // By its lesion, as the board names it; results without labels by their order.
    const name =
      tumour.label !== undefined
        ? tumourName(tumour.label)
        : zone.tumours.length === 1
          ? 'The tumour'
          : `Tumour ${index + 1}`;
    if (tumour.coveredPercent < 100) {
      reasons.push({
        rule: verdictRules.tumourCoverage,
        kind: 'tumour',
        value: tumour.coveredPercent,
        threshold: 100,
        severity: 'refusal',
        message:
          `${name} is ${uncoveredPercent(tumour.coveredPercent)} covered by the ${zone.model} ` +
          `zone (${tumour.volumeMl.toFixed(2)} mL); part of it lies outside.`,
      });
    }
    const severity: VerdictSeverity | null =
      tumour.minimalMarginMm < profile.marginMinimumMm
        ? 'refusal'
        : tumour.minimalMarginMm < profile.marginTargetMm
          ? 'caution'
          : null;
    if (severity === null) return;
    const isRefusal = severity === 'refusal';
    reasons.push({
      rule: isRefusal ? verdictRules.marginMinimum : verdictRules.marginTarget,
      kind: 'tumour',
      value: tumour.minimalMarginMm,
      threshold: isRefusal ? profile.marginMinimumMm : profile.marginTargetMm,
      severity,
      message:
        `${name}: minimal ablative margin ${mm(tumour.minimalMarginMm)} in the ${zone.model} ` +
        `zone, ${percent(tumour.surfaceBelowTargetPercent)} of its surface under the ` +
        `${mm(profile.marginTargetMm)} target; the safety profile ` +
        (isRefusal
          ? `refuses margins under ${mm(profile.marginMinimumMm)} (${profile.marginMinimumSource}).`
          : `aims at ${mm(profile.marginTargetMm)} (${profile.marginTargetSource}).`),
    });
  });
  return reasons;
}

function applicatorName(index: number, count: number): string {
  return count === 1 ? 'The applicator' : `Applicator ${index + 1}`;
}

function kindName(kind: StructureKind): string {
  return structureKindLabels[kind].toLowerCase();
}

function mm(value: number): string {
  return `${value.toFixed(1)} mm`;
}

function degrees(value: number): string {
  return `${value.toFixed(1)}°`;
}

function percent(value: number): string {
  return `${value.toFixed(1)} %`;
}

/** A coverage short of 100 % never reads "100.0 %": as many decimals as it takes, up to 3. */
function uncoveredPercent(value: number): string {
  for (let digits = 1; digits <= 3; digits++) {
    const text = value.toFixed(digits);
    if (Number(text) < 100) return `${text} %`;
  }
  return '> 99.999 %';
}
