/**
 * A verdict's reasons in words, as the plan comparison lists them and the board summary PDF
 * prints them: one place, so that the screen and the paper say the same.
 */
import { structureKindLabels } from './structures';
import type { VerdictReason, VerdictSeverity } from './assessments';

/** A figure in words: fixed decimals, a true minus sign, the unit after a space (none for °). */
export function formatFigure(value: number, decimals: number, unit: string): string {
  const text = value.toFixed(decimals);
  const signed = Number(text) === 0 ? text.replace('-', '') : text.replace('-', '\u2212');
  if (!unit) return signed;
  return unit === '°' ? `${signed}°` : `${signed} ${unit}`;
}

interface RuleFacts {
  label: string;
  unit: string;
  decimals: number;
  /** False where value and threshold are a flag, not a measurement (the message says it all). */
  hasFigures: boolean;
}

/**
 * The rules of the verdict engine (`verdictRules` in shared/src/assessment/verdict.ts) in words,
 * with the unit of their value and threshold. An unknown rule still shows its identifier, its
 * numbers and its message (which carries units).
 */
const ruleFacts: Record<string, RuleFacts> = {
  'critical-traversal': {
    label: 'Critical structure on the path',
    unit: 'mm',
    decimals: 1,
    hasFigures: true,
  },
  clearance: { label: 'Clearance', unit: 'mm', decimals: 1, hasFigures: true },
  'critical-clearance': {
    label: 'Clearance to a critical structure',
    unit: 'mm',
    decimals: 1,
    hasFigures: true,
  },
  'working-length': { label: 'Working length', unit: 'mm', decimals: 1, hasFigures: true },
  angulation: { label: 'Angulation', unit: '°', decimals: 1, hasFigures: true },
  'capsule-crossings': {
    label: 'Capsule crossings',
    unit: 'crossings',
    decimals: 0,
    hasFigures: true,
  },
  'parenchyma-before-tumour': {
    label: 'Parenchyma before the tumour',
    unit: 'mm',
    decimals: 1,
    hasFigures: true,
  },
  'tumour-coverage': { label: 'Tumour coverage', unit: '%', decimals: 1, hasFigures: true },
  'margin-minimum': { label: 'Minimal margin', unit: 'mm', decimals: 1, hasFigures: true },
  'margin-target': { label: 'Margin target', unit: 'mm', decimals: 1, hasFigures: true },
  'heat-sink': { label: 'Heat sink (vessel diameter)', unit: 'mm', decimals: 1, hasFigures: true },
  'coverage-not-assessed': {
    label: 'Coverage not assessed',
    unit: 'tumours',
    decimals: 0,
    hasFigures: true,
  },
  'path-beyond-series': {
    label: 'Path beyond the series',
    unit: 'samples',
    decimals: 0,
    hasFigures: true,
  },
  'zone-cut': { label: 'Zone cut at the grid edge', unit: '', decimals: 0, hasFigures: false },
};

export const severityLabels: Record<VerdictSeverity, string> = {
  refusal: 'Refusal',
  caution: 'Caution',
};

/** One reason of a verdict as the comparison lists it. */
export interface ReasonLine {
  severity: VerdictSeverity;
  severityLabel: string;
  ruleLabel: string;
  /** The structure kind concerned, in words; empty when the rule names none. */
  kindLabel: string;
  /** "3.2 mm"; empty for a rule without figures. */
  measured: string;
  threshold: string;
  message: string;
}

export function reasonLine(reason: VerdictReason): ReasonLine {
  const facts = ruleFacts[reason.rule] ?? {
    label: reason.rule,
    unit: '',
    decimals: 2,
    hasFigures: true,
  };
  const figure = (value: number) =>
    facts.hasFigures && Number.isFinite(value)
      ? formatFigure(value, facts.decimals, facts.unit)
      : '';
  return {
    severity: reason.severity,
    severityLabel: severityLabels[reason.severity],
    ruleLabel: facts.label,
    kindLabel: reason.kind ? structureKindLabels[reason.kind] : '',
    measured: figure(reason.value),
    threshold: figure(reason.threshold),
    message: reason.message,
  };
}
