/**
 * Draws the board summary of a case as a PDF (pdfkit, fonts embedded from `fonts/`). The page
 * layout is fixed so that a reader, and the test, can tell the page count from the content:
 *
 *   page 1              the case, its lesions and the liver scores of the panel in force (and a
 *                       line saying so when no plan has a finished assessment)
 *   one page a plan     each plan whose newest assessment is done: verdict, lead figures, reasons
 *   one page            the board's votes and the signed decision, when either exists
 *   key images          two a page, oldest first, each scaled to fit its half of the page with
 *                       its caption, pane, series, author and time: only when the case has any
 *   one page            bookings and treatment: only when the case has any
 *
 * The clinical caution is printed in the footer of every page, below the content area, after
 * every page has been laid out (pages are buffered), with "Page n of N".
 */
import { fileURLToPath } from 'node:url';
import PDFDocument from 'pdfkit';
import {
  BCLC_STAGE_LABELS,
  anaesthesiaLabels,
  bookingStateLabels,
  complicationGradeLabels,
  followUpModalityLabels,
  caseStatusLabels,
  clinicalCaution,
  keyImagePaneLabels,
  lesionKindLabels,
  primaryDiagnosisLabels,
  reasonCount,
  reasonLine,
  treatmentLabels,
  votePositionLabels,
  type DecisionView,
  type LiverScores,
  type TreatmentView,
} from '@emberline/shared';

import type {
  SummaryBooking,
  SummaryContent,
  SummaryKeyImage,
  SummaryPlan,
  SummaryTally,
} from './summary-content';
import { leadFigures, verdictWords } from './summary-figures';

/**
 * Roboto comes in per-script subsets; each weight is registered as a list of faces, and every
 * character is written in the first face that has a glyph for it, so that "≤", "µ" or "Δ" of a
 * verdict's message print rather than drop (the Latin subset alone lacks them).
 */
const subsets = ['latin', 'latin-ext', 'greek', 'math', 'symbols'] as const;
const weights = { regular: 400, medium: 500, bold: 700 } as const;
type Weight = keyof typeof weights;

const fontFile = (subset: string, weight: number) =>
  fileURLToPath(
    new URL(`../../../../fonts/roboto-${subset}-${weight}-normal.woff`, import.meta.url),
  );
const faceName = (weight: Weight, subset: string) => `${weight}-${subset}`;

/** A4 in PostScript points; the bottom margin leaves room for the two-line footer. */
const page = { size: 'A4' as const, margins: { top: 56, left: 56, right: 56, bottom: 96 } };
const ink = '#1f2933';
const muted = '#52606d';

type Doc = PDFKit.PDFDocument;

/** The PDF's bytes. Nothing is fetched: fonts come from the repository's `fonts/` folder. */
export function renderSummaryPdf(content: SummaryContent, now = new Date()): Promise<Buffer> {
  const doc = new PDFDocument({
    ...page,
    bufferPages: true,
    info: {
      Title: `Board summary ${content.caseCode}`,
      Creator: 'Emberline',
      CreationDate: now,
    },
  });
  for (const [weight, value] of Object.entries(weights) as [Weight, number][]) {
    for (const subset of subsets)
      doc.registerFont(faceName(weight, subset), fontFile(subset, value));
  }
  const chunks: Buffer[] = [];
  doc.on('data', (chunk: Buffer) => chunks.push(chunk));
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  casePage(doc, content, now);
  content.plans.forEach((plan, index) => {
    doc.addPage();
    planPage(doc, plan, index, content.plans.length);
  });
  if (content.tallies.length || content.decision) {
    doc.addPage();
    boardPage(doc, content.tallies, content.decision);
  }
  for (let first = 0; first < content.keyImages.length; first += keyImagesPerPage) {
    doc.addPage();
    keyImagePage(doc, content.keyImages, first);
  }
  if (content.bookings.length || content.treatment) {
    doc.addPage();
    bookingPage(doc, content.bookings, content.treatment);
  }
  footers(doc, content.caseCode);
  doc.end();
  return done;
}

function casePage(doc: Doc, content: SummaryContent, now: Date): void {
  write(doc, { weight: 'bold', size: 18 }, `Board summary: ${content.caseCode}`);
  write(doc, { size: 9, colour: muted }, `Made ${dateTime(now)}`);
  doc.moveDown(0.8);
  facts(doc, [
    ['Case code', content.caseCode],
    ['Board', content.boardName],
    ['Status', caseStatusLabels[content.status]],
    ['Diagnosis', primaryDiagnosisLabels[content.primaryDiagnosis]],
    ['Year of birth', String(content.yearOfBirth)],
    ['Sex', content.sex.charAt(0).toUpperCase() + content.sex.slice(1)],
  ]);

  heading(doc, 'Lesions');
  if (!content.lesions.length) line(doc, 'No lesion recorded.');
  for (const lesion of content.lesions) {
    line(
      doc,
      `Segment ${lesion.segment} · ${lesion.diameterMm} mm · ${lesionKindLabels[lesion.kind]}`,
    );
  }

  heading(doc, 'Liver scores');
  line(
    doc,
    content.panelTakenAt
      ? `From the laboratory panel taken ${dateTime(content.panelTakenAt)} (the newest).`
      : 'No laboratory panel recorded.',
    muted,
  );
  scoreLines(doc, content.scores);

  if (!content.plans.length) {
    heading(doc, 'Plan comparison');
    line(doc, 'No plan has a finished assessment.');
  }
}

function scoreLines(doc: Doc, scores: LiverScores): void {
  const missing = (name: keyof LiverScores['unavailable']) =>
    `not available (${scores.unavailable[name] ?? 'inputs missing'})`;
  facts(doc, [
    ['MELD', scores.meld === null ? missing('meld') : String(scores.meld)],
    ['MELD-Na', scores.meldNa === null ? missing('meldNa') : String(scores.meldNa)],
    [
      'Child-Pugh',
      scores.childPugh
        ? `Class ${scores.childPugh.class} (${scores.childPugh.points} points)`
        : missing('childPugh'),
    ],
    [
      'ALBI',
      scores.albi
        ? `${scores.albi.score.toFixed(3).replace('-', '\u2212')} (grade ${scores.albi.grade})`
        : missing('albi'),
    ],
    [
      'BCLC (suggestion)',
      scores.bclc
        ? `Stage ${scores.bclc.stage}: ${BCLC_STAGE_LABELS[scores.bclc.stage]}`
        : missing('bclc'),
    ],
  ]);
  if (scores.bclc) {
    line(doc, scores.bclc.rationale, muted);
    line(doc, scores.bclc.caution, muted);
  }
}

function planPage(doc: Doc, plan: SummaryPlan, index: number, count: number): void {
  const { result, inputs } = plan.assessment;
  write(doc, { size: 9, colour: muted }, `Plan comparison, plan ${index + 1} of ${count}`);
  write(doc, { weight: 'bold', size: 16 }, plan.name);
  doc.moveDown(0.4);
  facts(doc, [
    ['Verdict', verdictWords(plan)],
    ['Reasons', reasonCount(result.verdict.reasons)],
    ...leadFigures(plan).map((figure): [string, string] => [
      figure.label,
      figure.note ? `${figure.text}. ${figure.note}` : figure.text,
    ]),
    [
      'Assessed',
      `${dateTime(new Date(plan.assessment.updatedAt))}` +
        (inputs
          ? `, safety profile “${inputs.safetyProfile.name}” version ${inputs.safetyProfile.version}, engine ${inputs.engineVersion}`
          : `, engine ${result.engineVersion}`),
    ],
  ]);
  heading(doc, 'Reasons of the verdict');
  if (!result.verdict.reasons.length) line(doc, 'No rule raised a reason.');
  for (const reason of result.verdict.reasons.map(reasonLine)) {
    const parts = [
      reason.kindLabel && `structure: ${reason.kindLabel}`,
      reason.measured && `measured ${reason.measured}`,
      reason.threshold && `threshold ${reason.threshold}`,
    ].filter(Boolean);
    write(doc, { weight: 'medium', continued: parts.length > 0 }, [
      reason.severityLabel,
      ': ',
      reason.ruleLabel,
    ]);
    if (parts.length) write(doc, {}, ` (${parts.join(', ')})`);
    line(doc, reason.message, muted);
    doc.moveDown(0.3);
  }
}

function boardPage(doc: Doc, tallies: SummaryTally[], decision: DecisionView | null): void {
  heading(doc, 'Votes of the board');
  if (!tallies.length) line(doc, 'The case has not been discussed in a meeting.');
  for (const tally of tallies) {
    write(
      doc,
      { weight: 'medium' },
      `Meeting of ${dateTime(tally.meetingStartsAt)}: ${tally.voterCount} member${tally.voterCount === 1 ? '' : 's'} voted`,
    );
    const cast = tally.rows.filter((row) => row.support + row.oppose + row.abstain > 0);
    if (!cast.length) line(doc, 'No position was cast.');
    for (const row of cast) {
      line(
        doc,
        `${row.label}: ${votePositionLabels.support} ${row.support} · ` +
          `${votePositionLabels.oppose} ${row.oppose} · ${votePositionLabels.abstain} ${row.abstain}`,
      );
    }
    doc.moveDown(0.3);
  }

  heading(doc, 'Signed decision');
  if (!decision) {
    line(doc, 'No decision has been signed.');
    return;
  }
  facts(doc, [
    ['Outcome', treatmentLabels[decision.outcome]],
    ['Selected plan', decision.selectedPlan?.name ?? 'None'],
    ['Rationale', decision.rationale],
    ['Conditions', decision.conditions ?? 'None'],
    ['Signed by', decision.signer.displayName],
    ['Signed', dateTime(new Date(decision.signedAt))],
    ['Quorum', decision.quorum.explanation],
    ...(decision.quorumOverrideReason
      ? [['Chair’s reason to proceed', decision.quorumOverrideReason] as [string, string]]
      : []),
  ]);
  heading(doc, 'Amendments');
  if (!decision.amendments.length) line(doc, 'None.');
  for (const amendment of decision.amendments) {
    write(
      doc,
      { weight: 'medium' },
      `${dateTime(new Date(amendment.signedAt))}, signed by ${amendment.signer.displayName}`,
    );
    line(doc, amendment.text);
    line(doc, `Reason: ${amendment.reason}`, muted);
    doc.moveDown(0.3);
  }
}

/** Key images on a page: two, one above the other, each in a box of half the content height. */
const keyImagesPerPage = 2;
/** Room under each picture for its caption and byline (three lines of text), points. */
const keyImageTextPt = 52;

/** One page of key images, starting at `first`; the heading names their place among all. */
function keyImagePage(doc: Doc, images: readonly SummaryKeyImage[], first: number): void {
  const shown = images.slice(first, first + keyImagesPerPage);
  const last = first + shown.length;
  write(
    doc,
    { weight: 'bold', size: 13 },
    images.length > keyImagesPerPage
      ? `Key images ${first + 1}–${last} of ${images.length}`
      : 'Key images',
  );
  doc.moveDown(0.4);
  const width = doc.page.width - page.margins.left - page.margins.right;
  const bottom = doc.page.height - page.margins.bottom;
  const slotHeight = (bottom - doc.y) / keyImagesPerPage;
  const top = doc.y;
  shown.forEach((image, index) => {
    const y = top + index * slotHeight;
    const boxHeight = slotHeight - keyImageTextPt - 8;
    drawKeyImage(doc, image, page.margins.left, y, width, boxHeight);
    doc.y = y + boxHeight + 4;
    write(doc, { weight: 'medium' }, image.caption ?? 'No caption.');
    write(
      doc,
      { size: 9, colour: muted },
      `${keyImagePaneLabels[image.pane]} view · ${image.seriesLabel} · ${image.widthPx} × ${image.heightPx} px`,
    );
    write(
      doc,
      { size: 9, colour: muted },
      `Kept by ${image.authorName}, ${dateTime(image.createdAt)}`,
    );
  });
}

/** The picture scaled to fit the box (aspect kept, centred), or a line saying it is missing. */
function drawKeyImage(
  doc: Doc,
  image: SummaryKeyImage,
  x: number,
  y: number,
  width: number,
  height: number,
): void {
  if (image.png) {
    try {
      doc.image(image.png, x, y, { fit: [width, height], align: 'center', valign: 'center' });
      return;
    } catch {
      // An unreadable picture is named below instead of failing the whole summary.
    }
  }
  doc.y = y;
  line(doc, 'The picture of this key image could not be read.', muted);
}

const checklistStateWords = {
  open: 'open',
  met: 'met',
  'not-met': 'NOT MET',
  overridden: 'overridden',
} as const;

/** The procedure and follow-up bookings (not cancelled) and the treatment as recorded. */
function bookingPage(
  doc: Doc,
  bookings: readonly SummaryBooking[],
  treatment: TreatmentView | null,
): void {
  for (const booking of bookings) {
    const isProcedure = booking.kind === 'procedure';
    heading(doc, isProcedure ? 'Booking' : 'Follow-up imaging');
    const endsAt = new Date(booking.startsAt.getTime() + booking.durationMin * 60_000);
    facts(doc, [
      ['When', `${dateTime(booking.startsAt)} to ${dateTime(endsAt).slice(11)}`],
      ['Room', booking.room],
      ...(isProcedure
        ? ([
            ['Operator', booking.operatorName ?? 'None'],
            [
              'Anaesthesia',
              booking.anaesthesia ? anaesthesiaLabels[booking.anaesthesia] : 'Not stated',
            ],
          ] as [string, string][])
        : ([
            [
              'Modality',
              booking.modality ? followUpModalityLabels[booking.modality] : 'Not stated',
            ],
          ] as [string, string][])),
      ['State', bookingStateLabels[booking.state]],
    ]);
    if (!isProcedure) continue;
    if (!booking.checklist) {
      line(doc, 'Checklist: completed before the procedure was confirmed.', muted);
      continue;
    }
    write(doc, { weight: 'medium' }, 'Checklist');
    for (const item of booking.checklist) {
      line(
        doc,
        `${item.label}: ${checklistStateWords[item.state]}` +
          (item.overrideReason ? ` (reason: ${item.overrideReason})` : ''),
      );
    }
  }
  if (!treatment) return;
  heading(doc, 'Treatment');
  facts(doc, [
    ['Performed', dateTime(new Date(treatment.performedAt))],
    ['Operator', treatment.operator.displayName],
    ['Applicators used', treatment.applicatorsUsed],
    ['Deviation from the plan', treatment.deviation ?? 'None recorded'],
    ['Complication (Clavien–Dindo)', complicationGradeLabels[treatment.complicationGrade]],
    ...(treatment.complicationNote
      ? [['Complication note', treatment.complicationNote] as [string, string]]
      : []),
    [
      'Follow-up imaging proposed',
      dateTime(new Date(treatment.followUp.proposedDate)).slice(0, 10),
    ],
  ]);
  line(doc, treatment.followUp.basis, muted);
}

/** The caution and the page number under the content area of every page. */
function footers(doc: Doc, caseCode: string): void {
  const range = doc.bufferedPageRange();
  for (let index = range.start; index < range.start + range.count; index += 1) {
    doc.switchToPage(index);
    const width = doc.page.width - page.margins.left - page.margins.right;
    // Writing below the content area would otherwise start a new page.
    const bottom = doc.page.margins.bottom;
    doc.page.margins.bottom = 0;
    const top = doc.page.height - bottom + 18;
    write(doc, { size: 8, colour: muted, y: top, width }, clinicalCaution);
    write(
      doc,
      { size: 8, colour: muted, width },
      `${caseCode} · Page ${index + 1 - range.start} of ${range.count}`,
    );
    doc.page.margins.bottom = bottom;
  }
}

function heading(doc: Doc, text: string): void {
  doc.moveDown(0.8);
  write(doc, { weight: 'bold', size: 13 }, text);
  doc.moveDown(0.2);
}

function line(doc: Doc, text: string, colour = ink): void {
  write(doc, { colour }, text);
}

function facts(doc: Doc, rows: [string, string][]): void {
  for (const [label, value] of rows) {
    write(doc, { weight: 'medium', continued: true }, `${label}: `);
    write(doc, {}, value);
  }
}

interface Style {
  weight?: Weight;
  size?: number;
  colour?: string;
  /** The text goes on after this call (the next call continues its line). */
  continued?: boolean;
  y?: number;
  width?: number;
}

/** The glyph coverage of each registered face, read from its font program once. */
type FontProgram = { hasGlyphForCodePoint(codePoint: number): boolean };
const coverage = new WeakMap<Doc, Map<string, FontProgram | null>>();

function programOf(doc: Doc, face: string): FontProgram | null {
  const known = coverage.get(doc) ?? new Map<string, FontProgram | null>();
  coverage.set(doc, known);
  if (!known.has(face)) {
    doc.font(face);
    // pdfkit keeps the fontkit font of an embedded face as `font` on its current font object.
    const current = (doc as unknown as { _font?: { font?: FontProgram } })._font;
    known.set(face, current?.font ?? null);
  }
  return known.get(face) ?? null;
}

/** The text cut into runs, each in the first subset of the weight that has its glyphs. */
function runsOf(doc: Doc, weight: Weight, text: string): { face: string; text: string }[] {
  const runs: { face: string; text: string }[] = [];
  for (const character of text) {
    const codePoint = character.codePointAt(0) ?? 0;
    const subset =
      subsets.find((candidate) =>
        programOf(doc, faceName(weight, candidate))?.hasGlyphForCodePoint(codePoint),
      ) ?? subsets[0];
    const face = faceName(weight, subset);
    const last = runs.at(-1);
    if (last?.face === face) last.text += character;
    else runs.push({ face, text: character });
  }
  return runs;
}

/**
 * Writes text (a string, or parts joined) at the left margin or on the line a continued call
 * left open, switching faces within the line where a character needs another subset.
 */
function write(doc: Doc, style: Style, text: string | string[]): void {
  const weight = style.weight ?? 'regular';
  const runs = runsOf(doc, weight, Array.isArray(text) ? text.join('') : text);
  doc.fontSize(style.size ?? 10).fillColor(style.colour ?? ink);
  runs.forEach((run, index) => {
    const options = {
      continued: index < runs.length - 1 || style.continued === true,
      ...(style.width === undefined ? {} : { width: style.width }),
    };
    doc.font(run.face).fontSize(style.size ?? 10);
    const isLineStart = index === 0 && !isContinuing(doc);
    if (isLineStart) doc.text(run.text, page.margins.left, style.y, options);
    else doc.text(run.text, options);
  });
}

/** Whether the previous call left its line open (pdfkit's `continued`). */
function isContinuing(doc: Doc): boolean {
  return (doc as unknown as { _wrapper?: { continuedX?: number } | null })._wrapper != null;
}

/** "2026-05-04 09:30 UTC": one unambiguous form whatever the reader's locale. */
function dateTime(value: Date): string {
  return `${value.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}
