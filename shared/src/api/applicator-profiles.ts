/**
 * Applicator profiles (DEVELOPERS.md, "Data model"): what an ablation applicator is and the
 * zone its maker's table promises. Administrators manage them; plans refer to them by id.
 *
 * A zone table row says: at `powerW` for `timeS` the zone is an ellipsoid `zoneLengthMm` long
 * along the shaft and `zoneWidthMm` across it, its centre `tipOffsetMm` behind the tip towards
 * the entry.
 */
import { z } from 'zod';

export const ablationModalities = ['microwave', 'radiofrequency'] as const;
export type AblationModality = (typeof ablationModalities)[number];
export const ablationModalityLabels: Record<AblationModality, string> = {
  microwave: 'Microwave (MWA)',
  radiofrequency: 'Radiofrequency (RFA)',
};

const positive = (what: string) =>
  z.number({ error: `${what} must be a number` }).positive(`${what} must be greater than 0`);

export const zoneTableRowSchema = z.strictObject({
  powerW: positive('Power (W)').max(500, 'Power (W) must be at most 500'),
  timeS: positive('Time (s)').max(3600, 'Time (s) must be at most 3600'),
  zoneLengthMm: positive('Zone length (mm)').max(150, 'Zone length (mm) must be at most 150'),
  zoneWidthMm: positive('Zone width (mm)').max(150, 'Zone width (mm) must be at most 150'),
  tipOffsetMm: z
    .number({ error: 'Tip offset (mm) must be a number' })
    .min(-50, 'Tip offset (mm) must be at least -50')
    .max(100, 'Tip offset (mm) must be at most 100'),
});
export type ZoneTableRow = z.infer<typeof zoneTableRowSchema>;

/** A zone table: at least one row, no (power, time) pair twice. */
export const zoneTableSchema = z
  .array(zoneTableRowSchema)
  .min(1, 'The zone table needs at least one row')
  .max(200, 'The zone table may hold at most 200 rows')
  .superRefine((rows, context) => {
    const seen = new Set<string>();
    rows.forEach((row, index) => {
      const key = `${row.powerW}|${row.timeS}`;
      if (seen.has(key)) {
        context.addIssue({
          code: 'custom',
          path: [index],
          message: `The zone table holds ${row.powerW} W for ${row.timeS} s twice`,
        });
      }
      seen.add(key);
    });
  });

/**
 * Where a profile's zone table comes from, so that the board can weigh it: measured in excised
 * tissue, measured in living tissue, the maker's data sheet, or the institution's own experience.
 */
export const zoneTableSources = ['ex-vivo', 'in-vivo', 'manufacturer', 'institutional'] as const;
export type ZoneTableSource = (typeof zoneTableSources)[number];
export const zoneTableSourceLabels: Record<ZoneTableSource, string> = {
  'ex-vivo': 'Ex vivo measurements',
  'in-vivo': 'In vivo measurements',
  manufacturer: "Manufacturer's data",
  institutional: 'Institutional experience',
};

/** POST /api/admin/applicator-profiles, and the whole body of a PUT/PATCH. */
export const createApplicatorProfileSchema = z
  .strictObject({
    name: z.string().trim().min(1, 'A name is required').max(80),
    modality: z.enum(ablationModalities),
    gaugeG: z.number().int('Gauge must be a whole number').min(10).max(25),
    workingLengthMm: positive('Working length (mm)').max(400),
    activeLengthMm: positive('Active length (mm)').max(80),
    zoneTable: zoneTableSchema,
    zoneTableSource: z.enum(zoneTableSources, { error: 'Say where the zone table comes from' }),
    /** The reference or the note behind the zone table (a paper, a data-sheet revision…). */
    zoneTableReference: z.string().trim().max(300).optional(),
    notes: z.string().trim().max(2000).optional(),
  })
  .refine((profile) => profile.activeLengthMm < profile.workingLengthMm, {
    path: ['activeLengthMm'],
    message: 'The active length must be shorter than the working length',
  });
export type CreateApplicatorProfile = z.infer<typeof createApplicatorProfileSchema>;

/** PATCH /api/admin/applicator-profiles/:id: any field; `isRetired` hides it from new plans. */
export const updateApplicatorProfileSchema = z.strictObject({
  name: z.string().trim().min(1).max(80).optional(),
  modality: z.enum(ablationModalities).optional(),
  gaugeG: z.number().int().min(10).max(25).optional(),
  workingLengthMm: positive('Working length (mm)').max(400).optional(),
  activeLengthMm: positive('Active length (mm)').max(80).optional(),
  zoneTable: zoneTableSchema.optional(),
  zoneTableSource: z.enum(zoneTableSources).optional(),
  zoneTableReference: z.string().trim().max(300).optional(),
  notes: z.string().trim().max(2000).optional(),
  isRetired: z.boolean().optional(),
});
export type UpdateApplicatorProfile = z.infer<typeof updateApplicatorProfileSchema>;

export interface ApplicatorProfileView {
  id: string;
  name: string;
  modality: AblationModality;
  gaugeG: number;
  workingLengthMm: number;
  activeLengthMm: number;
  zoneTable: ZoneTableRow[];
  zoneTableSource: ZoneTableSource;
  zoneTableReference: string | null;
  /**
   * The version the profile is at. An edit of a version that an assessment used makes a new
   * version; assessments keep the one they ran on.
   */
  version: number;
  notes: string | null;
  /** Retired profiles stay readable for the plans that use them but cannot be chosen anew. */
  isRetired: boolean;
  createdAt: string;
  updatedAt: string;
}
