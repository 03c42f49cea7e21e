import type { EntityManager } from '@mikro-orm/postgresql';
import type {
  AnaesthesiaKind,
  AssessmentView,
  BookingKind,
  BookingState,
  ChecklistItemState,
  FollowUpModality,
  TreatmentView,
  CaseStatus,
  DecisionView,
  KeyImagePane,
  LesionKind,
  LiverScores,
  PrimaryDiagnosis,
  Sex,
  TallyRow,
} from '@emberline/shared';
import type { SignedInUser } from '../../common/request-context';
import { Assessment } from '../assessments/assessment.entity';
import { toAssessmentView } from '../assessments/assessment.service';
import { ClinicalCase } from '../cases/case.entity';
import { scoresOf } from '../cases/case.service';
import { loadPanelInForce } from '../cases/lab-panel-in-force';
import { Lesion } from '../cases/lesion.entity';
import { loadDecisionViews } from '../decisions/decision-view';
import { AgendaItem } from '../meetings/agenda-item.entity';
import { NeedlePlan } from '../plans/needle-plan.entity';
import type { FileStore } from '../imaging/file-store';
import { ImageSeries } from '../imaging/image-series.entity';
import { KeyImage } from '../key-images/key-image.entity';
import { tallyOf } from '../votes/tally';
import { ProcedureBooking } from '../bookings/booking.entity';
import { checklistOf } from '../bookings/booking-view';
import { TreatmentRecord } from '../bookings/treatment-record.entity';
import { toTreatmentView } from '../bookings/treatment';

/** A booking of the case that was not cancelled: the procedure or its follow-up imaging. */
export interface SummaryBooking {
  kind: BookingKind;
  state: BookingState;
  startsAt: Date;
  durationMin: number;
  room: string;
  /** Staff display name only. */
  operatorName: string | null;
  anaesthesia: AnaesthesiaKind | null;
  modality: FollowUpModality | null;
  /** A procedure's checklist as it stands (booked or confirmed), item by item. */
  checklist: { label: string; state: ChecklistItemState; overrideReason: string | null }[] | null;
}

/** An assessed plan as the comparison shows it: the plan and its newest assessment, done. */
export interface SummaryPlan {
  name: string;
  assessment: AssessmentView & { result: NonNullable<AssessmentView['result']> };
}

/** The tally of one agenda item on which the case was discussed. */
export interface SummaryTally {
  meetingStartsAt: Date;
  voterCount: number;
  rows: TallyRow[];
}

/** A key image as printed: its picture (null when the store lost it) and its byline. */
export interface SummaryKeyImage {
  caption: string | null;
  authorName: string;
  createdAt: Date;
  pane: KeyImagePane;
  seriesLabel: string;
  widthPx: number;
  heightPx: number;
  png: Buffer | null;
}

/**
 * Everything the board summary prints, read once. Only de-identified values: the case code,
 * year of birth and sex, never a staff e-mail address (signers by their display name only).
 */
export interface SummaryContent {
  caseCode: string;
  boardName: string;
  status: CaseStatus;
  yearOfBirth: number;
  sex: Sex;
  primaryDiagnosis: PrimaryDiagnosis;
  lesions: { segment: string; diameterMm: number; kind: LesionKind }[];
  /** The scores of the panel in force (`panelInForce`), with the date its values were taken. */
  scores: LiverScores;
  panelTakenAt: Date | null;
  plans: SummaryPlan[];
  tallies: SummaryTally[];
  decision: DecisionView | null;
  /** The case's key images, oldest first, with their pictures read from the file store. */
  keyImages: SummaryKeyImage[];
  /**
  /** The procedure and follow-up bookings not cancelled, by start; printed with the treatment. */
  bookings: readonly SummaryBooking[];
  treatment: TreatmentView | null;
}

/**
 * Reads the summary of a case the user may see; a case out of reach is the case file's 404
 * (`findVisibleOrFail`, the same visibility rule).
 */
export async function loadSummaryContent(
  em: EntityManager,
  user: SignedInUser,
  caseId: string,
  keyImageStore?: FileStore,
): Promise<SummaryContent> {
  const found = await em.getRepository(ClinicalCase).findVisibleOrFail(user, caseId, ['board']);
  const lesions = await em.find(
    Lesion,
    { clinicalCase: found.id },
    { orderBy: { createdAt: 'asc', id: 'asc' } },
  );
  // The same panel as the case file: the one in force (not superseded, not withdrawn).
  const panelInForce = await loadPanelInForce(em, found.id);
  const [decision] = await loadDecisionViews(em, { clinicalCase: found.id });
  return {
    caseCode: found.caseCode,
    boardName: found.board.getEntity().name,
    status: found.status,
    yearOfBirth: found.yearOfBirth,
    sex: found.sex,
    primaryDiagnosis: found.primaryDiagnosis,
    lesions: lesions.map(({ segment, diameterMm, kind }) => ({ segment, diameterMm, kind })),
    scores: scoresOf(found, lesions, panelInForce),
    panelTakenAt: panelInForce?.takenAt ?? null,
    plans: await assessedPlans(em, found.id),
    tallies: await discussedTallies(em, found.id),
    decision: decision ?? null,
    keyImages: keyImageStore ? await keyImagesOf(em, keyImageStore, found.id) : [],
    bookings: await summaryBookings(em, found.id),
    treatment: await summaryTreatment(em, found.id),
  };
}

async function summaryBookings(em: EntityManager, caseId: string): Promise<SummaryBooking[]> {
  const bookings = await em.find(
    ProcedureBooking,
    { clinicalCase: caseId, state: { $ne: 'cancelled' } },
    { populate: ['operator'], orderBy: { startsAt: 'asc', id: 'asc' } },
  );
  const summaries: SummaryBooking[] = [];
  for (const booking of bookings) {
    const isOpen = booking.state === 'booked' || booking.state === 'confirmed';
    const checklist = isOpen ? await checklistOf(em, booking) : null;
    summaries.push({
      kind: booking.kind,
      state: booking.state,
      startsAt: booking.startsAt,
      durationMin: booking.durationMin,
      room: booking.room,
      operatorName: booking.operator?.getEntity().displayName ?? null,
      anaesthesia: booking.anaesthesia,
      modality: booking.modality,
      checklist:
        checklist?.items.map((item) => ({
          label: item.label,
          state: item.state,
          overrideReason: item.override?.reason ?? null,
        })) ?? null,
    });
  }
  return summaries;
}

async function summaryTreatment(em: EntityManager, caseId: string): Promise<TreatmentView | null> {
  const record = await em.findOne(
    TreatmentRecord,
    { clinicalCase: caseId },
    { populate: ['operator'] },
  );
  return record ? toTreatmentView(record) : null;
}

/** Every plan whose newest assessment is done, oldest plan first: the comparison's columns. */
async function assessedPlans(em: EntityManager, caseId: string): Promise<SummaryPlan[]> {
  const plans = await em.find(
    NeedlePlan,
    { clinicalCase: caseId },
    { orderBy: { createdAt: 'asc', id: 'asc' } },
  );
  if (!plans.length) return [];
  const assessments = await em.find(
    Assessment,
    { plan: { $in: plans.map((plan) => plan.id) } },
    { orderBy: { createdAt: 'desc', id: 'desc' } },
  );
  return plans.flatMap((plan) => {
    const newest = assessments.find((assessment) => assessment.plan.id === plan.id);
    if (newest?.status !== 'done' || !newest.result) return [];
    const view = toAssessmentView(newest);
    return [{ name: plan.name, assessment: { ...view, result: newest.result } }];
  });
}

/** The tally of every agenda item whose meeting was held (opened or closed), oldest first. */
async function discussedTallies(em: EntityManager, caseId: string): Promise<SummaryTally[]> {
  const items = await em.find(
    AgendaItem,
    { clinicalCase: caseId, meeting: { state: { $ne: 'scheduled' } } },
    { populate: ['meeting'], orderBy: { meeting: { startsAt: 'asc' }, id: 'asc' } },
  );
  const tallies: SummaryTally[] = [];
  for (const item of items) {
    const tally = await tallyOf(em, item.id);
    tallies.push({
      meetingStartsAt: item.meeting.getEntity().startsAt,
      voterCount: tally.voterCount,
      rows: tally.rows,
    });
  }
  return tallies;
}

/** The key images of the case, oldest first (the Discussion section's order), with their PNGs. */
async function keyImagesOf(
  em: EntityManager,
  store: FileStore,
  caseId: string,
): Promise<SummaryKeyImage[]> {
  const images = await em.find(
    KeyImage,
    { clinicalCase: caseId },
    { populate: ['author'], orderBy: { createdAt: 'asc', id: 'asc' } },
  );
  if (!images.length) return [];
  const series = await em.find(
    ImageSeries,
    { clinicalCase: caseId },
    { orderBy: { createdAt: 'asc', id: 'asc' } },
  );
  const printed: SummaryKeyImage[] = [];
  for (const image of images) {
    const index = series.findIndex((entry) => entry.id === image.series.id);
    const shown = series[index];
    let png: Buffer | null = null;
    try {
      png = Buffer.from(await store.readWhole(image.storageKey));
    } catch {
      // A picture the store lost is named as missing on the page, never a failed summary.
    }
    printed.push({
      caption: image.caption,
      authorName: image.author.getEntity().displayName,
      createdAt: image.createdAt,
      pane: image.pane,
      seriesLabel: shown
        ? `Series ${shown.seriesNumber ?? `#${index + 1}`} · ${shown.modality}`
        : 'A series no longer listed',
      widthPx: image.widthPx,
      heightPx: image.heightPx,
      png,
    });
  }
  return printed;
}
