/**
 * A hint of the contrast phase of a series, for the presenter choosing what the board sees.
 * Archives state the phase only in free text: the Series Description, sometimes the Contrast/
 * Bolus Agent (0018,0010). The words below are those radiology departments commonly put in
 * series descriptions (common practice, from memory; not a standard vocabulary). A hint, never
 * a fact: the presenter confirms it by looking at the series.
 */
import { firstString, type DicomJsonDataset } from './dicom-json';

const phaseWords: { phase: string; pattern: RegExp }[] = [
  // Checked in this order: "late arterial" is arterial, "delayed venous" delayed, while
  // "portal venous" names the portal phase whatever else the description says.
  {
    phase: 'non-contrast',
    pattern:
      /\b(non[\s-]?contrast|unenhanced|non[\s-]?enhanced|native|plain|pre[\s-]?contrast|nc|w\/o|without)\b/i,
  },
  { phase: 'arterial', pattern: /\b(arterial|art|hap|lap|angio|cta)\b/i },
  { phase: 'portal venous', pattern: /\b(portal|porto[\s-]?venous|pv|pvp)\b/i },
  {
    phase: 'delayed',
    pattern: /\b(delay(ed)?|equilibrium|eq|late|transitional|hepatobiliary|hbp)\b/i,
  },
  { phase: 'portal venous', pattern: /\b(venous|ven)\b/i },
];

/** Words split at digits and separators, so that "PV_5mm" and "Art1" are seen as words. */
function words(text: string): string {
  return text.replace(/[_\d]+/g, ' ');
}

/** "arterial", "portal venous", "delayed", "non-contrast", "contrast" (agent named) or null. */
export function phaseHintOf(header: DicomJsonDataset): string | null {
  const description = words(firstString(header, '0008103E') ?? '');
  for (const { phase, pattern } of phaseWords) {
    if (pattern.test(description)) return phase;
  }
  const agent = firstString(header, '00180010');
  return agent && !/^(none|no)$/i.test(agent.trim()) ? 'contrast' : null;
}
