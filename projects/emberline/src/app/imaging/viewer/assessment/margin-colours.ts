/**
 * The colour scale of local ablative margins on the tumour surface, Emberline's own: three
 * bands a board reads apart — uncovered (margin under 0 mm: crimson, darker the deeper), short
 * of the safety profile's target (0 mm up to the target: burnt orange to pale straw) and at or
 * beyond the target (pale sea green to deep teal). Diverging about the target: the palest
 * colours sit at it, the darkest at the scale's ends, with a step of hue at 0 mm and at the
 * target so that no band fades into the next. Colour never stands alone: the legend carries
 * the numbers in mm and the panel the figures.
 */

export type Rgb = [number, number, number];

/** The span the scale shows, mm; margins beyond it take the end colours. */
export interface MarginScale {
  lowMm: number;
  targetMm: number;
  highMm: number;
}

/** 0…255 per channel. */
const uncoveredDeep: Rgb = [110, 14, 52];
const uncoveredEdge: Rgb = [232, 96, 132];
const shortAtZero: Rgb = [196, 92, 24];
const shortAtTarget: Rgb = [244, 226, 160];
const metAtTarget: Rgb = [190, 232, 212];
const metDeep: Rgb = [12, 96, 104];

/**
 * The scale for a margin target: from as far below 0 as the target lies above it (5 mm at
 * least) to twice the target (the target plus 5 mm at least), so that the three bands get
 * room on the legend whatever the profile says.
 */
export function marginScaleFor(targetMm: number): MarginScale {
  const target = Math.max(0, targetMm);
  return { lowMm: -Math.max(5, target), targetMm: target, highMm: target + Math.max(5, target) };
}

/** The colour of a local margin (mm) on the scale; NaN (no sample near) is grey. */
export function marginColour(marginMm: number, scale: MarginScale): Rgb {
  if (Number.isNaN(marginMm)) return [128, 128, 128];
  const { lowMm, targetMm, highMm } = scale;
  if (marginMm < 0) return mix(uncoveredEdge, uncoveredDeep, share(-marginMm, -lowMm));
  if (marginMm < targetMm) return mix(shortAtZero, shortAtTarget, share(marginMm, targetMm));
  return mix(metAtTarget, metDeep, share(marginMm - targetMm, highMm - targetMm));
}

/** The band a margin falls in, as the legend and the panel name it. */
export function marginBand(marginMm: number, targetMm: number): 'uncovered' | 'short' | 'met' {
  if (marginMm < 0) return 'uncovered';
  return marginMm < targetMm ? 'short' : 'met';
}

function share(value: number, span: number): number {
  return span > 0 ? Math.min(1, Math.max(0, value / span)) : 1;
}

function mix(from: Rgb, to: Rgb, t: number): Rgb {
  return [0, 1, 2].map((channel) =>
    Math.round(from[channel] + (to[channel] - from[channel]) * t),
  ) as Rgb;
}

/** Colours of many margins at once: r, g, b per value (0…255), for vtk.js direct scalars. */
export function marginColours(marginsMm: Float32Array, scale: MarginScale): Uint8Array {
  const colours = new Uint8Array(marginsMm.length * 3);
  for (let index = 0; index < marginsMm.length; index++) {
    colours.set(marginColour(marginsMm[index], scale), index * 3);
  }
  return colours;
}

export interface LegendTick {
  valueMm: number;
  /** From the scale's low end, percent of the bar. */
  atPercent: number;
  /** "−5", "0", "5"…, millimetres (the bar names the unit once). */
  label: string;
  isTarget: boolean;
}

/**
 * Ticks of the legend bar: 0 mm, the target and the ends always, and between them steps of
 * 1, 2, 2.5 or 5 × 10ⁿ mm, the finest giving at most seven ticks; ticks closer than 8 % of the
 * bar to 0 or the target give way to them.
 */
export function legendTicks(scale: MarginScale): LegendTick[] {
  const span = scale.highMm - scale.lowMm;
  const steps = [1, 2, 2.5, 5, 10, 20, 25, 50];
  const step = steps.find((candidate) => span / candidate <= 6) ?? 50;
  const values = new Set<number>([scale.lowMm, 0, scale.targetMm, scale.highMm]);
  for (let value = Math.ceil(scale.lowMm / step) * step; value <= scale.highMm; value += step) {
    const isCrowded = [0, scale.targetMm, scale.lowMm, scale.highMm].some(
      (kept) => kept !== value && Math.abs(kept - value) < 0.08 * span,
    );
    if (!isCrowded) values.add(Math.round(value * 1000) / 1000);
  }
  return [...values]
    .sort((a, b) => a - b)
    .map((valueMm) => ({
      valueMm,
      atPercent: ((valueMm - scale.lowMm) / span) * 100,
      label: formatMm(valueMm),
      isTarget: valueMm === scale.targetMm,
    }));
}

/** The bar's CSS gradient, left (low) to right (high), with the hard steps at 0 and the target. */
export function legendGradient(scale: MarginScale): string {
  const span = scale.highMm - scale.lowMm;
  const at = (valueMm: number) => `${(((valueMm - scale.lowMm) / span) * 100).toFixed(2)}%`;
  const css = (rgb: Rgb) => `rgb(${rgb[0]} ${rgb[1]} ${rgb[2]})`;
  return (
    'linear-gradient(to right, ' +
    [
      `${css(uncoveredDeep)} 0%`,
      `${css(uncoveredEdge)} ${at(0)}`,
      `${css(shortAtZero)} ${at(0)}`,
      `${css(shortAtTarget)} ${at(scale.targetMm)}`,
      `${css(metAtTarget)} ${at(scale.targetMm)}`,
      `${css(metDeep)} 100%`,
    ].join(', ') +
    ')'
  );
}

/** Millimetres with at most one decimal and a true minus sign. */
export function formatMm(valueMm: number): string {
  const rounded = Math.round(valueMm * 10) / 10;
  const text = Number.isInteger(rounded) ? String(Math.abs(rounded)) : Math.abs(rounded).toFixed(1);
  return rounded < 0 ? `−${text}` : text;
}
