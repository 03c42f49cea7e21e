import { describe, expect, it } from 'vitest';
import { homogeneousZoneSizes } from './homogeneous-zone';

describe('zone of one applicator in homogeneous liver', () => {
  it('grows a grid that was sized too small and answers the same zone', () => {
    // About 37 mm wide: beyond the first grid's radius of 1 + 15 mm, so the run must regrow.
    const heating = { powerW: 60, timeS: 600 };
    const [expected] = homogeneousZoneSizes(20, [heating], 0.3);
    // A grid sized for a zone of 4 × 2 mm: the zone reaches its walls and the run is repeated.
    const [regrown] = homogeneousZoneSizes(
      20,
      [{ ...heating, expectedLengthMm: 4, expectedWidthMm: 2, expectedTipOffsetMm: 10 }],
      0.3,
    );
    expect(regrown.touchesGridWall).toBe(false);
    expect(Math.abs(regrown.lengthMm - expected.lengthMm)).toBeLessThan(0.01);
    expect(Math.abs(regrown.widthMm - expected.widthMm)).toBeLessThan(0.01);
  });

  it('reads shorter heatings of one power from the same run, growing with time', () => {
    const sizes = homogeneousZoneSizes(
      20,
      [
        { powerW: 60, timeS: 600 },
        { powerW: 60, timeS: 180 },
        { powerW: 60, timeS: 360 },
      ],
      0.3,
    );
    const [longest, shortest, middle] = sizes;
    expect(shortest.widthMm).toBeLessThan(middle.widthMm);
    expect(middle.widthMm).toBeLessThan(longest.widthMm);
    const [alone] = homogeneousZoneSizes(20, [{ powerW: 60, timeS: 180 }], 0.3);
    expect(Math.abs(alone.widthMm - shortest.widthMm)).toBeLessThan(0.01);
  });

  it('refuses a non-positive parameter, naming the row', () => {
    expect(() => homogeneousZoneSizes(20, [{ powerW: 60, timeS: 300 }], 0)).toThrow(
      /rows\[0\]\.calibration must be a positive number/,
    );
  });
});
