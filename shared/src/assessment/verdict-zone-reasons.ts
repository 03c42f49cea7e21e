/**
 * The verdict's reasons about the zone (verdict.ts): coverage and margins of each tumour, and
 * heat-sink vessels beside the zone — each judged on its nominal figure and, where that meets
 * the rule, on its conservative bound ("cannot be confirmed"). Thresholds and their sources
 * belong to the safety profile; millimetres and percent.
 */
import type {
  HeatSinkVessel,
  VerdictReason,
  VerdictSeverity,
  ZoneAssessment,
  ZoneModel,
} from '../api/assessments';
import type { SafetyProfileBody } from '../api/safety-profiles';
import { verdictRules as rules } from './verdict-rules';
import { cannotBeConfirmed, kindName, mm, percent, uncoveredPercent } from './verdict-words';
import { tumourName } from './tumour-label';

/** Coverage and margin reasons of the zone the verdict uses. */
export function coverageReasons(zone: ZoneAssessment, profile: SafetyProfileBody): VerdictReason[] {
  if (zone.tumours.length === 0) {
    return [
      {
        rule: rules.coverageNotAssessed,
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
  const allowance =
    (zone.boundaryErrorMm ?? 0) > 0
      ? `the tumour a voxel beyond its labelled surface and the ${zone.model} zone its ` +
        `boundary error of ${mm(zone.boundaryErrorMm ?? 0)}`
      : 'the tumour a voxel beyond its labelled surface';
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
        rule: rules.tumourCoverage,
        kind: 'tumour',
        value: tumour.coveredPercent,
        threshold: 100,
        severity: 'refusal',
        message:
          `${name} is ${uncoveredPercent(tumour.coveredPercent)} covered by the ${zone.model} ` +
          `zone (${tumour.volumeMl.toFixed(2)} mL); part of it lies outside.`,
      });
    }
    const marginMm = tumour.minimalMarginMm;
    const boundMm = Math.min(marginMm, tumour.minimalMarginLowerMm ?? marginMm);
    const severity: VerdictSeverity | null =
      marginMm < profile.marginMinimumMm
        ? 'refusal'
        : marginMm < profile.marginTargetMm
          ? 'caution'
          : null;
    if (severity !== null) {
      const isRefusal = severity === 'refusal';
      reasons.push({
        rule: isRefusal ? rules.marginMinimum : rules.marginTarget,
        kind: 'tumour',
        value: marginMm,
        bound: boundMm,
        threshold: isRefusal ? profile.marginMinimumMm : profile.marginTargetMm,
        severity,
        message:
          `${name}: minimal ablative margin ${mm(marginMm)} in the ${zone.model} zone` +
          (boundMm < marginMm ? ` (as little as ${mm(boundMm)} allowing ${allowance})` : '') +
          `, ${percent(tumour.surfaceBelowTargetPercent)} of its surface under the ` +
          `${mm(profile.marginTargetMm)} target; the safety profile ` +
          (isRefusal
            ? `refuses margins under ${mm(profile.marginMinimumMm)} (${profile.marginMinimumSource}).`
            : `aims at ${mm(profile.marginTargetMm)} (${profile.marginTargetSource}).`),
      });
    }
    // Each threshold the nominal margin meets but its bound does not.
    const unconfirmed = [
      {
        rule: rules.marginMinimum,
        thresholdMm: profile.marginMinimumMm,
        requirement: `the minimal margin of ${mm(profile.marginMinimumMm)}`,
        source: profile.marginMinimumSource,
      },
      {
        rule: rules.marginTarget,
        thresholdMm: profile.marginTargetMm,
        requirement: `the margin target of ${mm(profile.marginTargetMm)}`,
        source: profile.marginTargetSource,
      },
    ];
    for (const check of unconfirmed) {
      if (!(marginMm >= check.thresholdMm && boundMm < check.thresholdMm)) continue;
      reasons.push({
        rule: check.rule,
        kind: 'tumour',
        value: marginMm,
        bound: boundMm,
        threshold: check.thresholdMm,
        severity: 'caution',
        message: cannotBeConfirmed({
          figure: `${name}'s minimal ablative margin in the ${zone.model} zone`,
          nominal: marginMm,
          bound: boundMm,
          allowance,
          requirement: check.requirement,
          source: check.source,
        }),
      });
    }
  });
  return reasons;
}

/**
 * One caution per heat-sink vessel: a certain one names its calibre and gap (and its band
 * when the band reaches below the calibre threshold); a possible one says which figure cannot
 * be confirmed.
 */
export function heatSinkReasons(
  vessels: readonly HeatSinkVessel[],
  model: ZoneModel,
  profile: SafetyProfileBody,
): VerdictReason[] {
  const thresholdMm = profile.heatSinkDiameterMm;
  const rule =
    `heat sink: at least ${mm(thresholdMm)} within ${mm(profile.heatSinkDistanceMm)}; ` +
    profile.heatSinkSource;
  return vessels.map((vessel) => {
    const lowerMm = vessel.diameterLowerMm ?? vessel.diameterMm;
    const upperMm = vessel.diameterUpperMm ?? vessel.diameterMm;
    const gapLowerMm = Math.min(vessel.distanceMm, vessel.distanceLowerMm ?? vessel.distanceMm);
    const band = `calibre band ${mm(lowerMm)} to ${mm(upperMm)}`;
    const base = {
      rule: rules.heatSink,
      kind: vessel.kind,
      value: vessel.diameterMm,
      bound: upperMm,
      threshold: thresholdMm,
      severity: 'caution' as const,
    };
    const name = `A ${kindName(vessel.kind)}`;
    if (!vessel.isPossible) {
      const straddles = lowerMm < thresholdMm;
      return {
        ...base,
        message:
          `${name} ${mm(vessel.diameterMm)} wide lies ${mm(vessel.distanceMm)} from the ${model} ` +
          `zone (${rule})` +
          (straddles ? `; its ${band} reaches below ${mm(thresholdMm)}` : '') +
          '.',
      };
    }
    const isCalibreUnconfirmed = vessel.diameterMm < thresholdMm;
    const what = isCalibreUnconfirmed
      ? `its calibre cannot be confirmed: read ${mm(vessel.diameterMm)}, ${band}`
      : `its distance cannot be confirmed: ${mm(vessel.distanceMm)}, as little as ` +
        `${mm(gapLowerMm)} allowing its wall a voxel nearer`;
    return {
      ...base,
      message:
        `${name} beside the ${model} zone may be a heat sink at this slice thickness; ${what} ` +
        `(${rule}).`,
    };
  });
}
