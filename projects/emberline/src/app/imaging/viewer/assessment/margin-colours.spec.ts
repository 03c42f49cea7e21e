import {
  formatMm,
  legendGradient,
  legendTicks,
  marginBand,
  marginColour,
  marginColours,
  marginScaleFor,
  type Rgb,
} from './margin-colours';

/**
 * CIE 1976 L* of an sRGB colour: the sRGB transfer function of IEC 61966-2-1 to linear light,
 * luminance Y with the Rec. 709 / sRGB primaries (0.2126, 0.7152, 0.0722), then
 * L* = 116 f(Y) − 16 with f the CIE cube root (linear below (6/29)³).
 */
function lightness([r, g, b]: Rgb): number {
  const linear = (channel: number) => {
    const c = channel / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  };
  const y = 0.2126 * linear(r) + 0.7152 * linear(g) + 0.0722 * linear(b);
  const f = y > (6 / 29) ** 3 ? Math.cbrt(y) : y / (3 * (6 / 29) ** 2) + 4 / 29;
  return 116 * f - 16;
}

/** Euclidean distance of two colours, 0…255 per channel. */
const apart = (a: Rgb, b: Rgb) => Math.hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]);

describe('margin colour scale', () => {
  // A 5 mm minimal ablative margin target, common practice (Wang X et al., "Margin size is an
  // independent predictor of local tumor progression after ablation of colon cancer liver
  // metastases", Cardiovasc Intervent Radiol 2013;36:166).
  const scale = marginScaleFor(5);

  it('spans as far below 0 as the target lies above it, and the target again above it', () => {
    expect(scale).toEqual({ lowMm: -5, targetMm: 5, highMm: 10 });
    expect(marginScaleFor(10)).toEqual({ lowMm: -10, targetMm: 10, highMm: 20 });
    expect(marginScaleFor(0)).toEqual({ lowMm: -5, targetMm: 0, highMm: 5 });
  });

  it('diverges about the target: lightness (CIE L*) falls towards both ends of the scale', () => {
    const at = (mm: number) => lightness(marginColour(mm, scale));
    for (const [nearer, farther] of [
      [4.9, 2.5],
      [2.5, 0],
      [5, 7.5],
      [7.5, 10],
      [-0.1, -2.5],
      [-2.5, -5],
    ]) {
      expect(at(nearer)).toBeGreaterThan(at(farther));
    }
    expect(at(5)).toBeGreaterThan(80);
    expect(at(10)).toBeLessThan(45);
    expect(at(-5)).toBeLessThan(30);
  });

  it('steps at 0 mm and at the target, so that neighbouring bands never blend', () => {
    expect(apart(marginColour(-0.01, scale), marginColour(0, scale))).toBeGreaterThan(60);
    expect(apart(marginColour(4.99, scale), marginColour(5, scale))).toBeGreaterThan(40);
  });

  it('tells the bands apart by hue: red uncovered, orange short, green-blue met', () => {
    const [ur, ug, ub] = marginColour(-2, scale);
    expect(ur).toBeGreaterThan(ug + 80);
    expect(ur).toBeGreaterThan(ub);
    const [sr, sg, sb] = marginColour(2, scale);
    expect(sr).toBeGreaterThan(sg);
    expect(sg).toBeGreaterThan(sb);
    const [mr, mg, mb] = marginColour(8, scale);
    expect(mg).toBeGreaterThan(mr);
    expect(mb).toBeGreaterThan(mr);
    expect(['uncovered', 'short', 'met']).toEqual([-2, 2, 8].map((mm) => marginBand(mm, 5)));
    expect(marginBand(5, 5)).toBe('met');
  });

  it('keeps the end colours beyond the scale and greys a vertex with no sample', () => {
    expect(marginColour(-30, scale)).toEqual(marginColour(-5, scale));
    expect(marginColour(40, scale)).toEqual(marginColour(10, scale));
    expect(marginColour(Number.NaN, scale)).toEqual([128, 128, 128]);
  });

  it('packs r, g, b per value for the 3D view', () => {
    const packed = marginColours(Float32Array.from([-3, 1, 9]), scale);
    expect(packed).toHaveLength(9);
    expect([...packed.subarray(3, 6)]).toEqual(marginColour(1, scale));
  });
});

describe('margin legend', () => {
  it('ticks 0, the target and both ends, evenly placed on a linear bar', () => {
    const ticks = legendTicks(marginScaleFor(5));
    expect(ticks.map((tick) => tick.valueMm)).toEqual([-5, -2.5, 0, 2.5, 5, 7.5, 10]);
    for (const tick of ticks)
      expect(tick.atPercent).toBeCloseTo(((tick.valueMm + 5) / 15) * 100, 9);
    expect(ticks.filter((tick) => tick.isTarget).map((tick) => tick.valueMm)).toEqual([5]);
    expect(ticks[0].label).toBe('−5');
    expect(ticks[1].label).toBe('−2.5');
  });

  it('keeps an odd target among the ticks, dropping a step tick that crowds it', () => {
    const ticks = legendTicks(marginScaleFor(6.5)).map((tick) => tick.valueMm);
    expect(ticks).toContain(0);
    expect(ticks).toContain(6.5);
    expect(ticks).not.toContain(6);
    expect(ticks.length).toBeLessThanOrEqual(8);
    expect([...ticks].sort((a, b) => a - b)).toEqual(ticks);
  });

  it('draws the bar with hard steps where 0 and the target fall', () => {
    const gradient = legendGradient(marginScaleFor(5));
    // 0 mm at a third of the bar, 5 mm at two thirds: each position appears twice (a step).
    expect(gradient.match(/33\.33%/g)).toHaveLength(2);
    expect(gradient.match(/66\.67%/g)).toHaveLength(2);
  });

  it('writes millimetres with one decimal at most and a true minus', () => {
    expect([formatMm(-2.5), formatMm(0), formatMm(7.25), formatMm(-0.04)]).toEqual([
      '−2.5',
      '0',
      '7.3',
      '0',
    ]);
  });
});
