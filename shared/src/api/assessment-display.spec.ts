import { describe, expect, it } from 'vitest';
import {
  decodeAssessmentDisplay,
  encodeAssessmentDisplay,
  AssessmentDisplayError,
} from './assessment-display';

const geometry = {
  dimensions: [3, 2, 2] as [number, number, number],
  spacingMm: [1, 1.5, 2] as [number, number, number],
  originLps: [-10, 5, 20] as [number, number, number],
  direction: [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ] as [[number, number, number], [number, number, number], [number, number, number]],
};

describe('assessment display body', () => {
  it('reads back the zones and margins it wrote, blocks of odd length included', () => {
    const mask = Uint8Array.from([1, 0, 1, 1, 0, 0, 1, 1, 1, 0, 0, 1]);
    const display = {
      zones: [
        { model: 'table' as const, geometry, mask },
        { model: 'bioheat' as const, geometry, mask: mask.map((value) => 1 - value) },
      ],
      margins: [
        {
          structureId: 'a',
          model: 'table' as const,
          pointsLps: Float32Array.from([1.5, -2.25, 3, 4, 5, 6]),
          marginMm: Float32Array.from([4.5, -1.25]),
        },
      ],
    };
    const decoded = decodeAssessmentDisplay(encodeAssessmentDisplay(display));
    expect(decoded.zones.map((zone) => zone.model)).toEqual(['table', 'bioheat']);
    expect([...decoded.zones[1].mask]).toEqual([...display.zones[1].mask]);
    expect(decoded.zones[0].geometry).toEqual(geometry);
    expect([...decoded.margins[0].pointsLps]).toEqual([1.5, -2.25, 3, 4, 5, 6]);
    expect([...decoded.margins[0].marginMm]).toEqual([4.5, -1.25]);
  });

  it('refuses a body cut short', () => {
    const body = encodeAssessmentDisplay({
      zones: [{ model: 'table', geometry, mask: new Uint8Array(12) }],
      margins: [],
    });
    expect(() => decodeAssessmentDisplay(body.slice(0, body.byteLength - 8))).toThrow(
      AssessmentDisplayError,
    );
  });
});
