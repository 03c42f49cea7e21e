/**
 * The figures the plan comparison leads with, in words for print: the nearest clearance against
 * its minimum, the lowest tumour coverage, the smallest margin with its conservative bound and
 * the zone model the verdict used. The same readings as the comparison's summary band: the
 * thresholds are those of the safety profile version the assessment ran on (its frozen inputs),
 * and a figure met only nominally, not by its bound, is said to be so.
 */
import {
  formatFigure,
  structureKindLabels,
  verdictLevelLabels,
  type AssessmentInputsView,
  type AssessmentResult,
  type StructureKind,
  type VerdictReason,
  type ZoneAssessment,
} from '@emberline/shared';
import type { SummaryPlan } from './summary-content';

export interface PrintedFigure {
  label: string;
  text: string;
  note: string;
}

/** Kinds a path enters on purpose: their clearance is no safety figure. */
const enteredOnPurpose = new Set<StructureKind>(['skin', 'liver', 'tumour']);

/** The primary model as the comparison names it, the others as the viewer's zone styles do. */
const zoneModelWords: Record<AssessmentResult['primaryZoneModel'], string> = {
  table: 'Applicator zone table',
  bioheat: 'Bioheat simulation (Pennes, Arrhenius)',
};
const otherZoneWords: Record<AssessmentResult['primaryZoneModel'], string> = {
  table: 'Table zone',
  bioheat: 'Physics zone',
};

export function verdictWords(plan: SummaryPlan): string {
  return verdictLevelLabels[plan.assessment.result.verdict.level];
}

/** "1 refusal · 2 cautions", or that no rule raised a reason. */
export function reasonCount(reasons: readonly VerdictReason[]): string {
  const count = (severity: VerdictReason['severity'], word: string) => {
    const found = reasons.filter((reason) => reason.severity === severity).length;
    return found ? [`${found} ${word}${found === 1 ? '' : 's'}`] : [];
  };
  const parts = [...count('refusal', 'refusal'), ...count('caution', 'caution')];
  return parts.length ? parts.join(' · ') : 'No rule raised a reason';
}

/** The lead figures of one assessed plan, in the comparison's order. */
export function leadFigures(plan: SummaryPlan): PrintedFigure[] {
  const { result, inputs } = plan.assessment;
  return [
    { label: 'Nearest clearance', ...nearestClearance(result, inputs) },
    { label: 'Lowest coverage', ...lowestCoverage(result) },
    { label: 'Smallest margin', ...smallestMargin(result, inputs) },
    { label: 'Zone model used', ...zoneModelUsed(result) },
  ];
}

type Figure = Omit<PrintedFigure, 'label'>;

function nearestClearance(result: AssessmentResult, inputs: AssessmentInputsView | null): Figure {
  const minimumOf = (kind: StructureKind) => inputs?.safetyProfile.minimumClearanceMm[kind];
  const candidates = result.applicators.flatMap((applicator, index) =>
    applicator.clearances
      .filter((clearance) => !enteredOnPurpose.has(clearance.kind))
      .map((clearance) => ({ index, clearance, minimumMm: minimumOf(clearance.kind) })),
  );
  if (!candidates.length) return { text: 'No structure near the path', note: '' };
  const conservative = (candidate: (typeof candidates)[number]) =>
    candidate.clearance.lowerBoundMm ?? candidate.clearance.minDistanceMm;
  const ruled = candidates.filter((candidate) => candidate.minimumMm !== undefined);
  // The least room against a minimum where the profile sets one, else the nearest structure.
  const worst = ruled.length
    ? smallestBy(ruled, (candidate) => conservative(candidate) - (candidate.minimumMm ?? 0))
    : smallestBy(candidates, conservative);
  const where = result.applicators.length > 1 ? `Applicator ${worst.index + 1}: ` : '';
  const text =
    `${where}${structureKindLabels[worst.clearance.kind]} ` +
    formatFigure(worst.clearance.minDistanceMm, 1, 'mm') +
    boundText(worst.clearance.lowerBoundMm);
  if (worst.minimumMm === undefined) {
    return {
      text,
      note: inputs
        ? 'The safety profile sets no minimum for it'
        : 'The minimum of the profile version assessed is not at hand',
    };
  }
  return {
    text,
    note: against(
      worst.clearance.minDistanceMm,
      worst.clearance.lowerBoundMm,
      worst.minimumMm,
      'minimum',
    ),
  };
}

function lowestCoverage(result: AssessmentResult): Figure {
  const zone = primaryZone(result);
  if (!zone) return { text: 'Not computed', note: '' };
  if (!zone.tumours.length) return { text: 'Not assessed', note: 'No tumour is labelled' };
  const lowest = smallestBy(zone.tumours, (tumour) => tumour.coveredPercent);
  // A tumour not wholly covered never reads "100.0 %": the shortfall must show.
  const shown = lowest.coveredPercent < 100 ? Math.floor(lowest.coveredPercent * 10) / 10 : 100;
  const name = lowest.label ?? 'the tumour';
  return {
    text: formatFigure(shown, 1, '%'),
    note: zone.tumours.length > 1 ? `Lowest of ${zone.tumours.length} tumours: ${name}` : name,
  };
}

function smallestMargin(result: AssessmentResult, inputs: AssessmentInputsView | null): Figure {
  const zone = primaryZone(result);
  if (!zone?.tumours.length) return { text: 'Not assessed', note: '' };
  const smallest = smallestBy(zone.tumours, (tumour) => tumour.minimalMarginMm);
  const text =
    formatFigure(smallest.minimalMarginMm, 1, 'mm') + boundText(smallest.minimalMarginLowerMm);
  const which = zone.tumours.length > 1 && smallest.label ? `${smallest.label}; ` : '';
  const threshold = (rule: string) =>
    result.verdict.reasons.find((reason) => reason.rule === rule)?.threshold;
  const targetMm = inputs?.safetyProfile.marginTargetMm ?? threshold('margin-target');
  const minimumMm = inputs?.safetyProfile.marginMinimumMm ?? threshold('margin-minimum');
  const { minimalMarginMm: valueMm, minimalMarginLowerMm: boundMm } = smallest;
  if (minimumMm !== undefined && valueMm < minimumMm) {
    return { text, note: which + against(valueMm, boundMm, minimumMm, 'minimum') };
  }
  if (targetMm !== undefined) {
    return { text, note: which + against(valueMm, boundMm, targetMm, 'target') };
  }
  return { text, note: which.replace(/; $/, '') };
}

function zoneModelUsed(result: AssessmentResult): Figure {
  const primary = result.zones.find((zone) => zone.model === result.primaryZoneModel);
  const others = result.zones
    .filter((zone) => zone.model !== result.primaryZoneModel)
    .map((zone) =>
      zone.isAdvisory
        ? `${otherZoneWords[zone.model]}: for information only` +
          (zone.advisoryReason ? ` (${zone.advisoryReason})` : '')
        : `${otherZoneWords[zone.model]} also computed`,
    );
  const caveat = primary?.isAdvisory
    ? [`Marked advisory${primary.advisoryReason ? `: ${primary.advisoryReason}` : ''}`]
    : [];
  return { text: zoneModelWords[result.primaryZoneModel], note: [...caveat, ...others].join('; ') };
}

/** The figure against its threshold in words: short, met only nominally, or the room left. */
function against(
  valueMm: number,
  boundMm: number | undefined,
  thresholdMm: number,
  name: string,
): string {
  const threshold = `${name.charAt(0).toUpperCase()}${name.slice(1)} ${formatFigure(thresholdMm, 1, 'mm')}`;
  if (valueMm < thresholdMm) {
    return `${threshold}: ${formatFigure(thresholdMm - valueMm, 1, 'mm')} short`;
  }
  if (boundMm !== undefined && boundMm < thresholdMm) {
    return `${threshold}: met, but not by its bound`;
  }
  return `${threshold}: ${formatFigure((boundMm ?? valueMm) - thresholdMm, 1, 'mm')} to spare`;
}

function primaryZone(result: AssessmentResult): ZoneAssessment | undefined {
  return result.zones.find((zone) => zone.model === result.primaryZoneModel) ?? result.zones[0];
}

/** A bound in brackets: the least the figure could be (words read better on paper than the sign). */
function boundText(boundMm: number | undefined): string {
  return boundMm === undefined ? '' : ` (at least ${formatFigure(boundMm, 1, 'mm')})`;
}

function smallestBy<T>(items: readonly T[], value: (item: T) => number): T {
  return items.reduce((best, item) => (value(item) < value(best) ? item : best));
}
