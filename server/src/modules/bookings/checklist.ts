import {
  checklistItemKeys,
  checklistItemLabels,
  manualChecklistItems,
  type ChecklistItemKey,
  type ChecklistItemState,
  type ChecklistItemView,
  type ChecklistView,
  type ThresholdKey,
} from '@emberline/shared';
import type { StoredChecklistMark } from './booking.entity';
import type { ChecklistThreshold } from './checklist-threshold.entity';
import { toThresholdView } from './checklist-thresholds';

const dayMs = 86_400_000;

/** What the automatic items read from the case's record. */
export interface ChecklistEvidence {
  /** The newest laboratory panel by the date its values were taken. */
  panel: { takenAt: Date; inr: number; plateletsE9L: number } | null;
  /**
   * The newest series by its upload time: the acquisition date is shifted by de-identification
   * and never stored unshifted, so the upload time stands in (README, "Checklist").
   */
  seriesUploadedAt: Date | null;
}

type Person = { id: string; displayName: string };

/** The threshold each automatic item is judged by. */
const thresholdOf: Partial<Record<ChecklistItemKey, ThresholdKey>> = {
  inr: 'inr-max',
  platelets: 'platelets-min',
  'lab-age': 'lab-max-age-days',
  'recent-imaging': 'imaging-max-age-days',
};

export function isManualItem(key: ChecklistItemKey): boolean {
  return manualChecklistItems.includes(key);
}

const day = (date: Date) => date.toISOString().slice(0, 10);
const daysBefore = (earlier: Date, later: Date) => (later.getTime() - earlier.getTime()) / dayMs;

/** Whether an automatic item is met, and what was found, against the booking's start. */
function automaticFinding(
  key: ChecklistItemKey,
  startsAt: Date,
  evidence: ChecklistEvidence,
  threshold: number,
): { isMet: boolean; finding: string } {
  const { panel } = evidence;
  if (key === 'recent-imaging') {
    if (!evidence.seriesUploadedAt) return { isMet: false, finding: 'No image series on file.' };
    const age = daysBefore(evidence.seriesUploadedAt, startsAt);
    return {
      isMet: age <= threshold,
      finding: `Newest series uploaded ${day(evidence.seriesUploadedAt)}, ${Math.floor(age)} days before the start (upload date; the acquisition date is not kept after de-identification).`,
    };
  }
  if (!panel) return { isMet: false, finding: 'No laboratory panel on file.' };
  const taken = `panel taken ${day(panel.takenAt)}`;
  if (key === 'inr') {
    return { isMet: panel.inr <= threshold, finding: `INR ${panel.inr} (${taken}).` };
  }
  if (key === 'platelets') {
    return {
      isMet: panel.plateletsE9L >= threshold,
      finding: `Platelets ${panel.plateletsE9L} × 10⁹/L (${taken}).`,
    };
  }
  const age = daysBefore(panel.takenAt, startsAt);
  return {
    isMet: age <= threshold,
    finding: `Newest ${taken}, ${Math.floor(age)} days before the start.`,
  };
}

/**
 * The checklist of a procedure booking: manual items as ticked; automatic items judged now
 * against the case's newest panel and series and the thresholds in force (INR at most the
 * maximum, platelets at least the minimum, ages at most the limits, against the booking's start).
 * A failed item that carries an override counts as overridden; an override of an item met since
 * is kept but the item reads met.
 */
export function evaluateChecklist(
  startsAt: Date,
  marks: Partial<Record<ChecklistItemKey, StoredChecklistMark>>,
  evidence: ChecklistEvidence,
  thresholds: Map<ThresholdKey, ChecklistThreshold>,
  people: Map<string, Person>,
): ChecklistView {
  const person = (id: string | undefined): Person | null =>
    id ? (people.get(id) ?? { id, displayName: 'Unknown user' }) : null;
  const items = checklistItemKeys.map((key): ChecklistItemView => {
    const mark = marks[key] ?? {};
    const override = mark.override
      ? {
          reason: mark.override.reason,
          by: person(mark.override.byId) as Person,
          at: mark.override.at,
        }
      : null;
    const thresholdKey = thresholdOf[key];
    const threshold = thresholdKey ? thresholds.get(thresholdKey) : undefined;
    let state: ChecklistItemState;
    let finding: string | null = null;
    if (isManualItem(key) || !threshold) {
      state = mark.isMet ? 'met' : 'open';
    } else {
      const judged = automaticFinding(key, startsAt, evidence, threshold.value);
      finding = judged.finding;
      state = judged.isMet ? 'met' : override ? 'overridden' : 'not-met';
    }
    return {
      key,
      label: checklistItemLabels[key],
      state,
      finding,
      threshold: threshold ? toThresholdView(threshold) : null,
      checkedBy: isManualItem(key) ? person(mark.checkedById) : null,
      checkedAt: isManualItem(key) ? (mark.checkedAt ?? null) : null,
      override,
    };
  });
  return {
    items,
    isComplete: items.every((item) => item.state === 'met' || item.state === 'overridden'),
  };
}
