/**
 * The structure kind a DICOM SEG segment description suggests: first its Segmented Property
 * Type (a SNOMED CT code, scheme SCT), then the words of its Segment Label, then those of the
 * type's Code Meaning. Only a suggestion: an explicit `labels` field overrides it, and anyone who
 * may change the structures remaps it afterwards. Nothing here keeps or logs the text it reads.
 */
import type { StructureKind } from '@emberline/shared';

export interface CodedConcept {
  codeValue: string;
  codingSchemeDesignator: string;
  codeMeaning: string;
}

export interface SegmentDescription {
  /** Segment Label (0062,0005), as read. */
  label: string;
  /** Segmented Property Type Code Sequence (0062,000F), its first item. */
  type: CodedConcept | null;
}

/**
 * SNOMED CT concept ids → kind. Checked against the SNOMED CT codes of HL7 mCODE's
 * RadiotherapyTreatmentLocationVS (AAPM TG-263 body structures), except where a line says
 * "from memory". Hepatic artery has no code here: its label text is recognised instead.
 */
const snomedKinds: Readonly<Record<string, StructureKind>> = {
  '10200004': 'liver', // Liver structure
  '108369006': 'tumour', // Neoplasm (morphologic abnormality); from memory
  '52988006': 'tumour', // Lesion; from memory
  '4147007': 'tumour', // Mass; from memory
  '32764006': 'portal-vein', // Portal vein structure
  '8993003': 'hepatic-vein', // Hepatic vein structure; from memory
  '28273000': 'bile-duct', // Bile duct structure; from memory
  '79741001': 'bile-duct', // Common bile duct structure
  '28231008': 'gallbladder', // Gallbladder structure
  '113276009': 'bowel', // Intestinal structure
  '14742008': 'bowel', // Structure of large intestine
  '30315005': 'bowel', // Structure of small intestine
  '71854001': 'bowel', // Colon structure
  '38848004': 'bowel', // Duodenal structure
  '21306003': 'bowel', // Jejunal structure
  '34516001': 'bowel', // Ileal structure
  '32713005': 'bowel', // Cecum structure
  '34402009': 'bowel', // Rectum structure
  '69695003': 'stomach', // Stomach structure
  '39607008': 'lung', // Lung structure
  '31094006': 'lung', // Structure of lobe of lung
  '80891009': 'heart', // Heart structure
  '64033007': 'kidney', // Kidney structure
  '272673000': 'bone', // Bone structure; from memory
  '119186007': 'bone', // Bone part
  '113197003': 'bone', // Bone structure of rib
  '39937001': 'skin', // Skin structure
};

/**
 * Words → kind, tried in order on lower-cased text (underscores and hyphens read as spaces), so
 * that "liver lesion" is a tumour and "hepatic vein" is not the liver. English terms of the
 * trade (common practice).
 */
const textRules: readonly { pattern: RegExp; kind: StructureKind }[] = [
  {
    pattern: /tumou?r|neoplasm|lesion|\bmass\b|metasta|carcinoma|\bhcc\b|cancer|\bgtv\b/,
    kind: 'tumour',
  },
  { pattern: /portal\s*vein|\bpv\b/, kind: 'portal-vein' },
  { pattern: /hepatic\s*vein|\bhv\b/, kind: 'hepatic-vein' },
  { pattern: /hepatic\s*arter/, kind: 'hepatic-artery' },
  { pattern: /bil(e|iary)\s*duct|\bcbd\b|biliary\s*tree/, kind: 'bile-duct' },
  { pattern: /gall\s*bladder/, kind: 'gallbladder' },
  {
    pattern: /bowel|colon|intestin|duoden|jejun|ileum|\bileal|rectum|sigmoid|ca?ecum/,
    kind: 'bowel',
  },
  { pattern: /stomach|gastric/, kind: 'stomach' },
  { pattern: /lung|pulmonary\s*lobe/, kind: 'lung' },
  { pattern: /heart|cardiac|myocard/, kind: 'heart' },
  { pattern: /kidney|\brenal\b(?!\s*(vein|arter))|nephr/, kind: 'kidney' },
  { pattern: /\bribs?\b|bone|vertebra|skelet|sternum|spine\b|spinal\s*column/, kind: 'bone' },
  { pattern: /\bskin\b/, kind: 'skin' },
  { pattern: /liver|hepatic\s*parenchyma/, kind: 'liver' },
];

function kindOfText(text: string): StructureKind | null {
  // "Portal_vein", "right-kidney" and "Gall bladder" read alike.
  const lower = text.toLowerCase().replace(/[\s_-]+/g, ' ');
  return textRules.find((rule) => rule.pattern.test(lower))?.kind ?? null;
}

/** The kind a segment description names, or null when nothing in it is recognised. */
export function suggestedKind(description: SegmentDescription): StructureKind | null {
  const { type } = description;
  if (type && type.codingSchemeDesignator.trim().toUpperCase() === 'SCT') {
    const kind = snomedKinds[type.codeValue.trim()];
    if (kind) return kind;
  }
  return kindOfText(description.label) ?? (type ? kindOfText(type.codeMeaning) : null);
}
