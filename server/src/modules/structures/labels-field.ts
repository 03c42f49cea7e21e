import { maxLabelValue, structureLabelsSchema, type StructureLabels } from '@emberline/shared';
import { StructureRefusal } from './structure-refusal';

/** The `labels` field parsed; a 400 naming `labels` and what is wrong otherwise. */
export function parseLabels(text: string | undefined): StructureLabels {
  if (text === undefined || text.trim() === '') return {};
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    throw new StructureRefusal(
      400,
      'labels',
      'The field "labels" is not JSON; send an object of label value → structure kind, ' +
        'e.g. {"1":"liver","2":"tumour"}.',
    );
  }
  const result = structureLabelsSchema.safeParse(parsed);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const key = issue?.path[0];
  const detail =
    typeof key === 'string' && issue?.code === 'invalid_value'
      ? `maps ${key} to ${JSON.stringify((parsed as Record<string, unknown>)[key])}, which is ` +
        'not a structure kind (tumour, liver, portal-vein, hepatic-vein, hepatic-artery, ' +
        'bile-duct, gallbladder, bowel, stomach, lung, heart, kidney, bone, skin)'
      : typeof key === 'string'
        ? `has the key ${JSON.stringify(key)}, which is not a label value from 1 to ${maxLabelValue}`
        : 'is not an object of label value → structure kind, e.g. {"1":"liver","2":"tumour"}';
  throw new StructureRefusal(400, 'labels', `The field "labels" ${detail}.`);
}
