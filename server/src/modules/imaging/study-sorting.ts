/**
 * Sorts the files of an upload into series (by Series Instance UID) and decides what is
 * offered: each image series that stacks into one regular volume becomes a candidate; reports,
 * presentation states, localizers and images Emberline cannot use are listed as skipped with
 * the reason, a series at a time. Headers only: no pixel is decoded here.
 */
import type { UploadSeriesCandidate, UploadSkippedObject } from '@emberline/shared';
import type { ScannedImage, ScannedInstance, ScannedOther } from './dicom-instance-reader';
import { firstNumber, firstString } from './dicom-json';
import { ImagingRefusal, type RefusalPayload } from './imaging-refusal';
import { planSeries, type PlannedImage, type SeriesPlan } from './series-assembly';

export interface SortedStudy {
  /** Image series to offer, by series number then description; keys s1, s2… in that order. */
  candidates: { key: string; plan: SeriesPlan; entryIndices: number[] }[];
  skipped: UploadSkippedObject[];
  /** True when something skipped was an image series (the presenter should see the listing). */
  hasSkippedImageSeries: boolean;
  /** The refusal an upload answers when no candidate is left. */
  refusalIfEmpty: RefusalPayload;
}

interface Entry {
  label: string;
  scanned: ScannedInstance;
}

function seriesKeyOf(scanned: ScannedInstance): string {
  return firstString(scanned.header, '0020000E') ?? `no-series:${scanned.label}`;
}

function plural(count: number, noun: string): string {
  return `${count} ${noun}${count === 1 ? '' : 's'}`;
}

/** "Dose report", "Localizer (series 2, 3 images)". */
function otherDescription(others: ScannedOther[]): string {
  const [first] = others;
  const number = firstNumber(first.header, '00200011');
  const details = [
    number !== undefined && Number.isInteger(number) ? `series ${number}` : null,
    others.length > 1 ? plural(others.length, 'file') : null,
  ].filter(Boolean);
  return details.length ? `${first.what} (${details.join(', ')})` : first.what;
}

function otherReason(other: ScannedOther, count: number): string {
  if (!other.isUnusableImage) {
    return other.what === 'Localizer'
      ? 'a localizer (scout) is a planning view, not a volume'
      : 'not an image series';
  }
  const detail = other.refusal.detail.replace(/\.$/, '');
  return count > 1 ? `${detail}; ${plural(count - 1, 'more file')} alike` : detail;
}

function candidateView(key: string, plan: SeriesPlan): UploadSeriesCandidate {
  return {
    key,
    description: plan.description,
    modality: plan.modality,
    seriesNumber: plan.seriesNumber,
    sliceCount: plan.geometry.dimensions[2],
    sliceThicknessMm:
      plan.sliceThicknessMm === null ? null : Math.round(plan.sliceThicknessMm * 100) / 100,
    orientation: plan.orientation,
    phaseHint: plan.phaseHint,
    matrix: [plan.geometry.dimensions[0], plan.geometry.dimensions[1]],
    transferSyntaxName: plan.compression.transferSyntaxName,
    isLossy: plan.compression.isLossy,
  };
}

export function listCandidate(candidate: SortedStudy['candidates'][number]): UploadSeriesCandidate {
  return candidateView(candidate.key, candidate.plan);
}

/** Sorts scanned files into candidates and skipped objects. */
export function sortStudy(entries: readonly Entry[]): SortedStudy {
  // By series: a series is offered whole or not at all.
  const groups = new Map<string, number[]>();
  entries.forEach((entry, index) => {
    const key = seriesKeyOf(entry.scanned);
    groups.set(key, [...(groups.get(key) ?? []), index]);
  });
  const plans: { plan: SeriesPlan; entryIndices: number[] }[] = [];
  const skipped: UploadSkippedObject[] = [];
  const refusals: RefusalPayload[] = [];
  const seriesRefusals: RefusalPayload[] = [];
  let hasSkippedImageSeries = false;
  for (const indices of groups.values()) {
    const imageIndices = indices.filter((index) => entries[index].scanned.kind === 'image');
    const others = indices
      .map((index) => entries[index].scanned)
      .filter((scanned): scanned is ScannedOther => scanned.kind === 'other');
    const unusable = others.filter((other) => other.isUnusableImage);
    // Reports, presentation states and localizers: one line per kind within the series.
    const byWhat = new Map<string, ScannedOther[]>();
    for (const other of others.filter((entry) => !entry.isUnusableImage)) {
      byWhat.set(other.what, [...(byWhat.get(other.what) ?? []), other]);
    }
    for (const alike of byWhat.values()) {
      skipped.push({
        description: otherDescription(alike),
        reason: otherReason(alike[0], alike.length),
      });
      refusals.push(alike[0].refusal);
    }
    if (unusable.length) {
      // One unusable image (burned-in text, colour, another modality) sets the series aside.
      hasSkippedImageSeries = true;
      skipped.push({
        description: otherDescription(unusable),
        reason: otherReason(unusable[0], unusable.length),
      });
      (imageIndices.length ? seriesRefusals : refusals).push(unusable[0].refusal);
      continue;
    }
    if (!imageIndices.length) continue;
    const images: PlannedImage[] = imageIndices.map((index) => ({
      label: entries[index].label,
      scanned: entries[index].scanned as ScannedImage,
    }));
    try {
      plans.push({ plan: planSeries(images), entryIndices: imageIndices });
    } catch (error) {
      if (!(error instanceof ImagingRefusal)) throw error;
      hasSkippedImageSeries = true;
      const header = images[0].scanned.header;
      const number = firstNumber(header, '00200011');
      skipped.push({
        description: `${firstString(header, '00080060') ?? 'Image'} series${
          number !== undefined && Number.isInteger(number) ? ` ${number}` : ''
        } (${plural(images.length, 'file')})`,
        reason: error.message,
      });
      // A broken image series is what a single-series upload should hear about first.
      seriesRefusals.push({ status: error.status, reason: error.reason, detail: error.message });
    }
  }
  plans.sort(
    (a, b) =>
      (a.plan.seriesNumber ?? Infinity) - (b.plan.seriesNumber ?? Infinity) ||
      a.plan.description.localeCompare(b.plan.description),
  );
  return {
    candidates: plans.map((entry, index) => ({ key: `s${index + 1}`, ...entry })),
    skipped,
    hasSkippedImageSeries,
    refusalIfEmpty: emptyRefusal(seriesRefusals, refusals, skipped),
  };
}

/**
 * Why an upload with no candidate is refused: a broken image series first (that is what its
 * sender meant to send), else the one kind of object it held, else all of them listed.
 */
function emptyRefusal(
  seriesRefusals: RefusalPayload[],
  refusals: RefusalPayload[],
  skipped: UploadSkippedObject[],
): RefusalPayload {
  if (seriesRefusals.length) return seriesRefusals[0];
  if (refusals.length === 1) return refusals[0];
  if (refusals.length === 0) {
    return { status: 400, reason: 'no-files', detail: 'The upload holds no DICOM files.' };
  }
  return {
    status: 415,
    reason: refusals[0].reason,
    detail:
      'The upload holds no CT or MR image series Emberline can use: ' +
      skipped.map((item) => `${item.description}: ${item.reason}`).join('; ') +
      '.',
  };
}
