/**
 * The kinds of structure a label may stand for: the identifiers of DESIGN.md §6, used in the
 * API and the code of the whole product.
 */
export const STRUCTURE_KINDS = [
  'tumour',
  'liver',
  'portal-vein',
  'hepatic-vein',
  'hepatic-artery',
  'bile-duct',
  'gallbladder',
  'bowel',
  'stomach',
  'lung',
  'heart',
  'kidney',
  'bone',
  'skin',
] as const;

export type StructureKind = (typeof STRUCTURE_KINDS)[number];
