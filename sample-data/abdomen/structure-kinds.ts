/**
 * The kinds of structure a label may stand for: the identifiers used in the API and the code of
 * the whole product (DEVELOPERS.md, "Structure kinds").
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
