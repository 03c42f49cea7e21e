/**
 * The figures the plan comparison leads with, one set a plan: the verdict's reason count, the
 * nearest clearance against its threshold, the coverage, the minimal margin with its
 * conservative bound, and the zone model the verdict used. Pure and shared: the comparison's
 * summary band and the board summary PDF print the same readings.
 *
 * Thresholds are those of the safety profile version the assessment ran on, as the assessment
 * recorded them (`inputs.safetyProfile`), whatever the profile's current version; the verdict's
 * own reasons carry the threshold of every rule a plan missed. Where neither tells (an
 * assessment stored before inputs were recorded), the figure says the threshold is not at hand.
 */
import type { AssessmentInputsView } from './assessment-snapshot';
import type {
  AssessmentResult,
  KindClearance,
  VerdictReason,
  ZoneAssessment,
  ZoneModel,
} from './assessments';
import { structureKindLabels, type StructureKind } from './structures';
import { formatFigure } from './verdict-reason-lines';

/** The zone models by name, as the comparison and the summary print them. */
export const zoneModelLabels: Record<ZoneModel, string> = {
  table: 'Applicator zone table',
  bioheat: 'Bioheat simulation (Pennes, Arrhenius)',
};

/** The zone models' short names (the viewer's zone toggles use them too). */
export const zoneModelShortLabels: Record<ZoneModel, string> = {
  table: 'Table zone',
  bioheat: 'Physics zone',
};

/** One figure of a summary line. */
export interface SummaryFigure {
  /** The figure in words with its unit (and its bound, where it carries one). */
  text: string;
  /** Against what: the threshold and the room left, the tumour it concerns … */
  note: string;
  /** The figure, or its conservative bound, misses its threshold. */
  isShort: boolean;
}

/** The thresholds of the safety profile version an assessment ran on. */
export interface ProfileThresholds {
  /** Minimum clearance by kind, mm; kinds without a clearance rule are absent. */
  clearanceMm: ReadonlyMap<StructureKind, number>;
  marginTargetMm: number;
  marginMinimumMm: number;
}

/** Kinds a path enters on purpose: their clearance is no safety figure. */
const enteredOnPurpose = new Set<StructureKind>(['skin', 'liver', 'tumour']);

/** The thresholds of the safety profile version an assessment ran on, as it recorded them. */
export function thresholdsFor(inputs: AssessmentInputsView | null): ProfileThresholds | null {
  if (!inputs) return null;
  const used = inputs.safetyProfile;
  return {
    clearanceMm: new Map(Object.entries(used.minimumClearanceMm) as [StructureKind, number][]),
    marginTargetMm: used.marginTargetMm,
    marginMinimumMm: used.marginMinimumMm,
  };
}

/** The figures a comparison leads with for one assessed plan (what the band shows a line). */
export interface LeadFigures {
  /** "1 refusal · 2 cautions", or that no rule raised one. */
  reasonCount: string;
  clearance: SummaryFigure;
  coverage: SummaryFigure;
  margin: SummaryFigure;
  zoneModel: SummaryFigure;
}

/**
 * The lead figures of one assessment: thresholds from its recorded inputs (null for an
 * assessment stored before inputs were recorded), tumours named by `tumourLabel`.
 */
export function leadFigures(
  result: AssessmentResult,
  inputs: AssessmentInputsView | null,
  tumourLabel: (structureId: string) => string,
): LeadFigures {
  const thresholds = thresholdsFor(inputs);
  return {
    reasonCount: reasonCount(result.verdict.reasons),
    clearance: worstClearance(result, thresholds),
    coverage: lowestCoverage(result, tumourLabel),
    margin: smallestMargin(result, thresholds, tumourLabel),
    zoneModel: zoneModelUsed(result),
  };
}

/**
 * Tumours as the board names them: by the label the assessment gave (its confirmed lesion,
 * "segment VIII, 24 mm", or "label N, not linked to a lesion"); in results from before tumours
 * were named, by their structure name, else by their order of appearance.
 */
export function tumourLabeller(
  results: readonly AssessmentResult[],
  names: ReadonlyMap<string, string>,
): (structureId: string) => string {
  const tumours = results.flatMap((result) => result.zones.flatMap((zone) => zone.tumours));
  const order = [...new Set(tumours.map((tumour) => tumour.structureId))];
  const labels = new Map<string, string>();
  for (const tumour of tumours) {
    if (tumour.label !== undefined && !labels.has(tumour.structureId)) {
      labels.set(tumour.structureId, `Tumour (${tumour.label})`);
    }
  }
  return (structureId) =>
    labels.get(structureId) ?? names.get(structureId) ?? `Tumour ${order.indexOf(structureId) + 1}`;
}

export function reasonCount(reasons: readonly VerdictReason[]): string {
  const count = (severity: VerdictReason['severity'], word: string) => {
    const found = reasons.filter((reason) => reason.severity === severity).length;
    return found ? [`${found} ${word}${found === 1 ? '' : 's'}`] : [];
  };
  const parts = [...count('refusal', 'refusal'), ...count('caution', 'caution')];
  return parts.length ? parts.join(' · ') : 'No rule raised a reason';
}

interface ClearanceCandidate {
  applicatorIndex: number;
  clearance: KindClearance;
  /** The kind's minimum clearance, mm, when known. */
  minimumMm: number | undefined;
}

/**
 * The clearance with the least room against its minimum, read on its conservative bound where
 * the result carries one; with no minimum known, the nearest structure.
 */
function worstClearance(
  result: AssessmentResult,
  thresholds: ProfileThresholds | null,
): SummaryFigure {
  const candidates: ClearanceCandidate[] = result.applicators.flatMap((applicator, index) =>
    applicator.clearances
      .filter((clearance) => !enteredOnPurpose.has(clearance.kind))
      .map((clearance) => ({
        applicatorIndex: index,
        clearance,
        minimumMm:
          thresholds?.clearanceMm.get(clearance.kind) ??
          minimumFromReasons(result.verdict.reasons, clearance),
      })),
  );
  if (!candidates.length) {
    return { text: 'No structure near the path', note: 'In the assessed region', isShort: false };
  }
  const conservative = (candidate: ClearanceCandidate) =>
    candidate.clearance.lowerBoundMm ?? candidate.clearance.minDistanceMm;
  const ruled = candidates.filter((candidate) => candidate.minimumMm !== undefined);
  const worst = ruled.length
    ? smallestBy(ruled, (candidate) => conservative(candidate) - (candidate.minimumMm ?? 0))
    : smallestBy(candidates, conservative);
  const { clearance, minimumMm } = worst;
  const where = result.applicators.length > 1 ? `Applicator ${worst.applicatorIndex + 1}: ` : '';
  const kind = structureKindLabels[clearance.kind];
  const text =
    `${where}${result.applicators.length > 1 ? kind.toLowerCase() : kind} ` +
    formatFigure(clearance.minDistanceMm, 1, 'mm') +
    boundText(clearance.lowerBoundMm);
  if (minimumMm === undefined) {
    return {
      text,
      note: thresholds
        ? 'Nearest structure; the safety profile sets no minimum for it'
        : 'Nearest structure; the minimum of the profile version assessed is not at hand',
      isShort: false,
    };
  }
  return {
    text,
    ...against(clearance.minDistanceMm, clearance.lowerBoundMm, minimumMm, 'minimum'),
  };
}

/** A clearance's minimum from the verdict reason it raised (a critical kind's refusal is at half). */
function minimumFromReasons(
  reasons: readonly VerdictReason[],
  clearance: KindClearance,
): number | undefined {
  const reason = reasons.find(
    (candidate) =>
      (candidate.rule === 'clearance' || candidate.rule === 'critical-clearance') &&
      candidate.kind === clearance.kind &&
      Math.abs(candidate.value - clearance.minDistanceMm) < 1e-6,
  );
  if (!reason) return undefined;
  return reason.rule === 'critical-clearance' ? reason.threshold * 2 : reason.threshold;
}

/** The figure against its threshold in words: short, met only nominally, or the room left. */
function against(
  valueMm: number,
  boundMm: number | undefined,
  thresholdMm: number,
  name: string,
): Omit<SummaryFigure, 'text'> {
  const threshold = `${name} ${formatFigure(thresholdMm, 1, 'mm')}`;
  if (valueMm < thresholdMm) {
    return {
      note: `${capitalised(threshold)}: ${formatFigure(thresholdMm - valueMm, 1, 'mm')} short`,
      isShort: true,
    };
  }
  if (boundMm !== undefined && boundMm < thresholdMm) {
    return { note: `${capitalised(threshold)}: met, but not by its bound`, isShort: true };
  }
  const room = (boundMm ?? valueMm) - thresholdMm;
  return {
    note: `${capitalised(threshold)}: ${formatFigure(room, 1, 'mm')} to spare`,
    isShort: false,
  };
}

function lowestCoverage(
  result: AssessmentResult,
  tumourLabel: (structureId: string) => string,
): SummaryFigure {
  const zone = primaryZone(result);
  if (!zone) return { text: 'Not computed', note: '', isShort: false };
  if (!zone.tumours.length) {
    return { text: 'Not assessed', note: 'No tumour is labelled on the series', isShort: true };
  }
  const lowest = smallestBy(zone.tumours, (tumour) => tumour.coveredPercent);
  // A tumour not wholly covered never reads "100.0 %": the shortfall must show.
  const shown = lowest.coveredPercent < 100 ? Math.floor(lowest.coveredPercent * 10) / 10 : 100;
  return {
    text: formatFigure(shown, 1, '%'),
    note:
      zone.tumours.length > 1
        ? `Lowest of ${zone.tumours.length} tumours: ${tumourLabel(lowest.structureId)}`
        : tumourLabel(lowest.structureId),
    isShort: lowest.coveredPercent < 100,
  };
}

function smallestMargin(
  result: AssessmentResult,
  thresholds: ProfileThresholds | null,
  tumourLabel: (structureId: string) => string,
): SummaryFigure {
  const zone = primaryZone(result);
  if (!zone?.tumours.length) return { text: 'Not assessed', note: '', isShort: false };
  const smallest = smallestBy(zone.tumours, (tumour) => tumour.minimalMarginMm);
  const text =
    formatFigure(smallest.minimalMarginMm, 1, 'mm') + boundText(smallest.minimalMarginLowerMm);
  const which = zone.tumours.length > 1 ? `${tumourLabel(smallest.structureId)}; ` : '';
  const targetMm =
    thresholds?.marginTargetMm ??
    result.verdict.reasons.find((reason) => reason.rule === 'margin-target')?.threshold;
  const minimumMm =
    thresholds?.marginMinimumMm ??
    result.verdict.reasons.find((reason) => reason.rule === 'margin-minimum')?.threshold;
  if (minimumMm !== undefined && smallest.minimalMarginMm < minimumMm) {
    const figure = against(
      smallest.minimalMarginMm,
      smallest.minimalMarginLowerMm,
      minimumMm,
      'minimum',
    );
    return { text, note: which + figure.note, isShort: true };
  }
  if (targetMm !== undefined) {
    const figure = against(
      smallest.minimalMarginMm,
      smallest.minimalMarginLowerMm,
      targetMm,
      'target',
    );
    return { text, note: which + figure.note, isShort: figure.isShort };
  }
  const isMissed = result.verdict.reasons.some((reason) => reason.rule.startsWith('margin-'));
  return {
    text,
    note: which + (isMissed ? 'Under the profile’s target' : 'At or above the profile’s target'),
    isShort: isMissed,
  };
}

function zoneModelUsed(result: AssessmentResult): SummaryFigure {
  const others = result.zones
    .filter((zone) => zone.model !== result.primaryZoneModel)
    .map((zone) =>
      zone.isAdvisory
        ? `${zoneModelShortLabels[zone.model]}: for information only` +
          (zone.advisoryReason ? ` (${zone.advisoryReason})` : '')
        : `${zoneModelShortLabels[zone.model]} also computed`,
    );
  const primary = result.zones.find((zone) => zone.model === result.primaryZoneModel);
  const caveat = primary?.isAdvisory
    ? [`Marked advisory${primary.advisoryReason ? `: ${primary.advisoryReason}` : ''}`]
    : [];
  return {
    text: zoneModelLabels[result.primaryZoneModel],
    note: [...caveat, ...others].join('; '),
    isShort: false,
  };
}

function primaryZone(result: AssessmentResult): ZoneAssessment | undefined {
  return result.zones.find((zone) => zone.model === result.primaryZoneModel) ?? result.zones[0];
}

function boundText(boundMm: number | undefined): string {
  // As the table writes a bound: in brackets, the least the figure could be.
  return boundMm === undefined ? '' : ` (≥ ${formatFigure(boundMm, 1, 'mm')})`;
}

function smallestBy<T>(items: readonly T[], value: (item: T) => number): T {
  return items.reduce((best, item) => (value(item) < value(best) ? item : best));
}

function capitalised(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}
