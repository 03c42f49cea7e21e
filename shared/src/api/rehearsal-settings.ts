/**
 * What a case asks of its insertion rehearsal: the mesh resolution, the breathing (Lujan's
 * model) and the liver's elasticity. Cases without their own settings use the defaults. The
 * engine that uses them is shared/src/assessment/rehearsal-stage.ts; the sources of the
 * defaults are in the READMEs of shared/src/rehearsal.
 */
import { z } from 'zod';
import { rehearsalMeshResolutions } from './assessments';

export const rehearsalSettingsSchema = z.strictObject({
  resolution: z.enum(rehearsalMeshResolutions, 'The mesh is coarse, medium or fine'),
  breathing: z.strictObject({
    amplitudeMm: z.number().min(0, 'At least 0 mm').max(40, 'At most 40 mm'),
    periodS: z.number().min(1.5, 'At least 1.5 s').max(12, 'At most 12 s'),
    shapeN: z.number().min(1, 'At least 1').max(6, 'At most 6'),
  }),
  material: z.strictObject({
    youngsModulusPa: z.number().min(500, 'At least 500 Pa').max(100_000, 'At most 100 kPa'),
    poissonRatio: z.number().min(0.3, 'At least 0.3').max(0.49, 'At most 0.49'),
  }),
});
export type RehearsalSettings = z.infer<typeof rehearsalSettingsSchema>;

/**
 * Defaults: the medium mesh (about 6 mm cells); breathing 12 mm superior–inferior, 4 s, n = 2
 * (common practice for quiet breathing; the model of Lujan et al., Med Phys 1999); liver
 * Young's modulus 6 kPa and Poisson's ratio 0.45 (in vivo elastography of healthy liver reports
 * a few kPa — from memory; near-incompressible soft tissue, common practice).
 */
export const DEFAULT_REHEARSAL_SETTINGS: RehearsalSettings = {
  resolution: 'medium',
  breathing: { amplitudeMm: 12, periodS: 4, shapeN: 2 },
  material: { youngsModulusPa: 6000, poissonRatio: 0.45 },
};
