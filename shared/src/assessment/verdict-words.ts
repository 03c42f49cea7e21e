/**
 * How the verdict words its figures: millimetres, degrees and percent with one decimal, the
 * applicators and structure kinds by name, and the sentence for a rule that the nominal figure
 * meets but its conservative bound does not.
 */
import { structureKindLabels, type StructureKind } from '../api/structures';

export function applicatorName(index: number, count: number): string {
  return count === 1 ? 'The applicator' : `Applicator ${index + 1}`;
}

export function kindName(kind: StructureKind): string {
  return structureKindLabels[kind].toLowerCase();
}

export function mm(value: number): string {
  return `${value.toFixed(1)} mm`;
}

export function degrees(value: number): string {
  return `${value.toFixed(1)}°`;
}

export function percent(value: number): string {
  return `${value.toFixed(1)} %`;
}

/** A coverage short of 100 % never reads "100.0 %": as many decimals as it takes, up to 3. */
export function uncoveredPercent(value: number): string {
  for (let digits = 1; digits <= 3; digits++) {
    const text = value.toFixed(digits);
    if (Number(text) < 100) return `${text} %`;
  }
  return '> 99.999 %';
}

/** What a "cannot be confirmed" sentence names. */
export interface UnconfirmedFigure {
  /** The figure, e.g. "The applicator's clearance to the gallbladder". */
  figure: string;
  nominal: number;
  bound: number;
  /** What the bound allows for, e.g. "its surface a voxel nearer". */
  allowance: string;
  /** The rule, e.g. "a clearance of at least 10.0 mm". */
  requirement: string;
  source: string;
}

/**
 * The sentence for a rule met by a figure's nominal value but not by its conservative bound:
 * the figure, both values, the threshold, and that it cannot be confirmed at this slice
 * thickness.
 */
export function cannotBeConfirmed(unconfirmed: UnconfirmedFigure): string {
  const { figure, nominal, bound, allowance, requirement, source } = unconfirmed;
  return (
    `${figure} reads ${mm(nominal)}, but ${mm(bound)} allowing ${allowance}: ` +
    `${requirement} cannot be confirmed at this slice thickness (${source}).`
  );
}
