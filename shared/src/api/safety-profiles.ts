/**
 * Safety profiles (DEVELOPERS.md, "Data model"): the thresholds that turn an assessment's
 * figures into a verdict. Administrators edit them; one is the default for new assessments.
 * Every threshold carries where it comes from, so the board can weigh it.
 */
import { z } from 'zod';
import { structureKinds, type StructureKind } from './structures';

/** Where a threshold comes from: common practice of the trade, or a named published source. */
export const thresholdSourceSchema = z
  .string()
  .trim()
  .min(1, 'Say where the value comes from')
  .max(300);

export const structureRuleSchema = z.strictObject({
  kind: z.enum(structureKinds),
  /** Below this path clearance (mm) the verdict carries a caution; 0 means no clearance rule. */
  minimumClearanceMm: z.number().min(0).max(100),
  /** A critical kind may not be traversed, nor approached closer than half the minimum. */
  isCritical: z.boolean(),
  source: thresholdSourceSchema,
});
export type StructureRule = z.infer<typeof structureRuleSchema>;

export const safetyProfileBodySchema = z.strictObject({
  name: z.string().trim().min(1, 'A name is required').max(80),
  structureRules: z
    .array(structureRuleSchema)
    .max(structureKinds.length)
    .superRefine((rules, context) => {
      const seen = new Set<StructureKind>();
      rules.forEach((rule, index) => {
        if (seen.has(rule.kind)) {
          context.addIssue({
            code: 'custom',
            path: [index, 'kind'],
            message: `${rule.kind} appears twice`,
          });
        }
        seen.add(rule.kind);
      });
    }),
  /** Minimal ablative margin the zone should reach around every tumour, mm. */
  marginTargetMm: z.number().min(0).max(30),
  marginTargetSource: thresholdSourceSchema,
  /** Below this margin (mm) the plan is not acceptable (0: tumour left outside the zone). */
  marginMinimumMm: z.number().min(-30).max(30),
  marginMinimumSource: thresholdSourceSchema,
  /** Vessels at least this wide (mm) within `heatSinkDistanceMm` of the zone sink heat. */
  heatSinkDiameterMm: z.number().positive().max(30),
  heatSinkDistanceMm: z.number().min(0).max(50),
  heatSinkKinds: z.array(z.enum(structureKinds)).max(structureKinds.length),
  heatSinkSource: thresholdSourceSchema,
  /** Steepest angle from the axial plane the team accepts, degrees. */
  maximumAngulationDeg: z.number().min(0).max(90),
  angulationSource: thresholdSourceSchema,
  /** Normal liver parenchyma the path should cross before the tumour, mm. */
  minimumParenchymaBeforeTumourMm: z.number().min(0).max(50),
  parenchymaSource: thresholdSourceSchema,
  /** Liver capsule crossings per applicator beyond which the verdict carries a caution. */
  maximumCapsuleCrossings: z.number().int().min(1).max(5),
  capsuleSource: thresholdSourceSchema,
  /**
   * Largest leave-one-out error (mm) of the heating model against an applicator profile's own
   * zone table for which the physics zone may decide the verdict; beyond it the table zone
   * decides and the physics zone is shown for information only.
   */
  physicsToleranceMm: z.number().min(0).max(20).default(2),
  physicsToleranceSource: thresholdSourceSchema.default(
    'Team choice: a model zone should predict a zone table row it was not fitted to within about ' +
      'the 2 mm scan grid before it replaces the manufacturer table; review per device.',
  ),
  /**
   * Largest tip error (mm) of the robot-assisted insertion rehearsal above which the verdict
   * carries a caution.
   */
  rehearsalToleranceMm: z.number().min(0).max(20).default(2),
  rehearsalToleranceSource: thresholdSourceSchema.default(
    'Common practice: robot-assisted needle placement aims at a tip within about 2 mm of the ' +
      'target; the rehearsal is a simulation estimate, review per device and team.',
  ),
  isDefault: z.boolean().optional(),
});
export type SafetyProfileBody = z.infer<typeof safetyProfileBodySchema>;

export interface SafetyProfileView extends Omit<SafetyProfileBody, 'isDefault'> {
  id: string;
  isDefault: boolean;
  /**
   * The version the profile is at. An edit of a version that an assessment used makes a new
   * version; assessments keep the one they ran on.
   */
  version: number;
  createdAt: string;
  updatedAt: string;
}
