/**
 * Needle plans: one or more applicators, each an entry and a target point in patient LPS
 * millimetres on one series of the case, with its profile, power and time.
 */
import { z } from 'zod';
import type { Vec3 } from '../geometry/vector';

/** Needle plan states, in order (DEVELOPERS.md, "The product's shape"). */
export const planStatuses = [
  'draft',
  'submitted',
  'assessed',
  'assessment-failed',
  'selected',
  'set-aside',
] as const;
export type PlanStatus = (typeof planStatuses)[number];
export const planStatusLabels: Record<PlanStatus, string> = {
  draft: 'Draft',
  submitted: 'Submitted',
  assessed: 'Assessed',
  'assessment-failed': 'Assessment failed',
  selected: 'Selected',
  'set-aside': 'Set aside',
};

const coordinate = z
  .number({ error: 'A coordinate must be a number (LPS, mm)' })
  .refine(Number.isFinite, 'A coordinate must be finite')
  .refine((value) => Math.abs(value) <= 10_000, 'A coordinate must lie within ±10 000 mm');
/** A point in patient LPS, millimetres. */
export const lpsPointSchema = z.tuple([coordinate, coordinate, coordinate]);

/** Shortest entry-to-target distance a plan accepts: below it the direction is meaningless. */
export const minimumApplicatorPathMm = 1;

export const applicatorPlacementSchema = z
  .strictObject({
    entry: lpsPointSchema,
    target: lpsPointSchema,
    profileId: z.uuid('profileId must be an applicator profile id'),
    powerW: z.number().positive('Power (W) must be greater than 0').max(500),
    timeS: z.number().positive('Time (s) must be greater than 0').max(3600),
  })
  .refine(
    (applicator) =>
      Math.hypot(
        applicator.target[0] - applicator.entry[0],
        applicator.target[1] - applicator.entry[1],
        applicator.target[2] - applicator.entry[2],
      ) >= minimumApplicatorPathMm,
    { path: ['target'], message: 'The target must lie at least 1 mm from the entry' },
  );
export type ApplicatorPlacement = z.infer<typeof applicatorPlacementSchema>;

export const maximumApplicatorsPerPlan = 6;

/** POST /api/cases/:id/plans */
export const createPlanSchema = z.strictObject({
  name: z.string().trim().min(1, 'A name is required').max(80),
  seriesId: z.uuid('seriesId must be an image series id'),
  applicators: z
    .array(applicatorPlacementSchema)
    .min(1, 'A plan needs at least one applicator')
    .max(
      maximumApplicatorsPerPlan,
      `A plan may hold at most ${maximumApplicatorsPerPlan} applicators`,
    ),
  notes: z.string().trim().max(4000).optional(),
});
export type CreatePlan = z.infer<typeof createPlanSchema>;

/** PATCH /api/plans/:id (drafts only); `status` may move a draft to `submitted`. */
export const updatePlanSchema = z.strictObject({
  name: z.string().trim().min(1).max(80).optional(),
  applicators: z
    .array(applicatorPlacementSchema)
    .min(1, 'A plan needs at least one applicator')
    .max(maximumApplicatorsPerPlan)
    .optional(),
  notes: z.string().trim().max(4000).nullable().optional(),
  status: z
    .literal('submitted', { error: 'status may only move a draft to "submitted"' })
    .optional(),
});
export type UpdatePlan = z.infer<typeof updatePlanSchema>;

export interface ApplicatorPlacementView {
  entry: Vec3;
  target: Vec3;
  profileId: string;
  /** The profile's name when the plan was read (profiles may be renamed later). */
  profileName: string;
  powerW: number;
  timeS: number;
}

export interface PlanView {
  id: string;
  caseId: string;
  seriesId: string;
  name: string;
  status: PlanStatus;
  applicators: ApplicatorPlacementView[];
  notes: string | null;
  author: { id: string; displayName: string };
  createdAt: string;
  updatedAt: string;
}
