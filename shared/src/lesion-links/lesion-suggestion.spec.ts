/**
 * The lesion-link suggestion. Sources: the sphere volume V = πd³/6 and the ellipsoid volume
 * V = πabc/6 for axes a, b, c (so the equivalent-sphere diameter of an ellipsoid is (abc)^⅓)
 * [C]; the isodiametric inequality (a solid's diameter is at least that of the ball of its
 * volume) [S, textbook]; the placement of Couinaud's segments (Couinaud 1957; Bismuth 1982),
 * from memory [M], as lesion-suggestion.ts lists it; DICOM PS3.3 C.7.6.2.1.1 for LPS [S].
 */
import { describe, expect, it } from 'vitest';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { measureLabels } from './label-geometry';
import {
  positionMismatch,
  suggestLesionLinks,
  thirdsInLiver,
  tumourSizeMm,
  type LiverBox,
  type SuggestionLesion,
  type SuggestionTumour,
} from './lesion-suggestion';

/** A spherical tumour of diameter d (mm) centred at `centre`: V = πd³/6 [C], extent d. */
function sphere(id: string, diameterMm: number, centre: Vec3 = [0, 0, 0]): SuggestionTumour {
  return {
    id,
    volumeMm3: (Math.PI * diameterMm ** 3) / 6,
    extentMm: [diameterMm, diameterMm, diameterMm],
    centroidLps: centre,
  };
}

const lesion = (
  id: string,
  segment: SuggestionLesion['segment'],
  diameterMm: number,
): SuggestionLesion => ({ id, segment, diameterMm });

/** A liver box: x −100 (patient right) … 0, y −50 (anterior) … 50, z −60 (feet) … 60. */
const liver: LiverBox = { min: [-100, -50, -60], max: [0, 50, 60] };
/** Right, posterior, inferior: thirds (0, 2, 0), where segment VI lies [M]. */
const rightPosteriorInferior: Vec3 = [-90, 30, -40];
/** Left, posterior, superior: thirds (2, 2, 2), where segment II lies [M]. */
const leftPosteriorSuperior: Vec3 = [-10, 20, 40];

describe('measureLabels (DICOM PS3.3 C.7.6.2.1.1: P = S + X·Δi·i + Y·Δj·j + Z·Δk·k)', () => {
  it('measures a block of voxels on a turned grid: count, volume, centre and extents', () => {
    const geometry: VolumeGeometry = {
      dimensions: [8, 6, 3],
      spacingMm: [1, 2, 3],
      originLps: [10, 20, 30],
      // i runs posterior, j towards the patient's right: a quarter turn about z.
      direction: [
        [0, 1, 0],
        [-1, 0, 0],
        [0, 0, 1],
      ],
    };
    const labels = new Uint8Array(8 * 6 * 3);
    for (let k = 0; k <= 1; k++) {
      for (let j = 1; j <= 3; j++) {
        for (let i = 2; i <= 5; i++) labels[i + 8 * (j + 6 * k)] = 3;
      }
    }
    labels[0] = 1;
    const measured = measureLabels(labels, geometry, [3, 7]);
    expect([...measured.keys()]).toEqual([3]);
    const block = measured.get(3);
    expect(block?.voxelCount).toBe(24);
    expect(block?.volumeMm3).toBeCloseTo(24 * 1 * 2 * 3, 9);
    // Mean index (3.5, 2, 0.5) → (10 − 2·2, 20 + 1·3.5, 30 + 3·0.5) [C].
    expect(block?.centroidLps[0]).toBeCloseTo(6, 9);
    expect(block?.centroidLps[1]).toBeCloseTo(23.5, 9);
    expect(block?.centroidLps[2]).toBeCloseTo(31.5, 9);
    expect(block?.extentMm).toEqual([4, 6, 6]);
    // Cells i 1.5…5.5, j 0.5…3.5, k −0.5…1.5 → x 3…9, y 21.5…25.5, z 28.5…34.5 [C].
    expect(block?.boxLps.min.map((value) => Number(value.toFixed(9)))).toEqual([3, 21.5, 28.5]);
    expect(block?.boxLps.max.map((value) => Number(value.toFixed(9)))).toEqual([9, 25.5, 34.5]);
  });

  it('sizes a voxelised 20 mm sphere within a voxel of 20 mm', () => {
    const spacingMm: Vec3 = [0.8, 0.8, 2.5];
    const geometry: VolumeGeometry = {
      dimensions: [40, 40, 14],
      spacingMm,
      originLps: [-15.6, -15.6, -16.1],
      direction: [
        [1, 0, 0],
        [0, 1, 0],
        [0, 0, 1],
      ],
    };
    const labels = new Uint8Array(40 * 40 * 14);
    let index = 0;
    for (let k = 0; k < 14; k++) {
      for (let j = 0; j < 40; j++) {
        for (let i = 0; i < 40; i++, index++) {
          const x = -15.6 + 0.8 * i;
          const y = -15.6 + 0.8 * j;
          const z = -16.1 + 2.5 * k;
          if (x * x + y * y + z * z <= 100) labels[index] = 2;
        }
      }
    }
    const measured = measureLabels(labels, geometry, [2]).get(2);
    if (!measured) throw new Error('the sphere was not painted');
    // The extreme voxel centres lie within one spacing of the surface, so each side is within
    // one spacing of 20 mm; the size takes the largest side [C].
    expect(Math.abs(tumourSizeMm(measured) - 20)).toBeLessThanOrEqual(2.5);
    for (let axis = 0; axis < 3; axis++) {
      expect(Math.abs(measured.centroidLps[axis])).toBeLessThan(spacingMm[axis] / 2);
    }
  });
});

describe('the size of a tumour', () => {
  it('is the equivalent-sphere diameter for a sphere (V = πd³/6)', () => {
    expect(tumourSizeMm(sphere('t', 24))).toBeCloseTo(24, 9);
  });

  it("is an elongated tumour's longest side, above its equivalent diameter (abc)^⅓", () => {
    // Ellipsoid of axes 40 × 10 × 10 mm: V = π·40·10·10/6, equivalent diameter 15.87 mm [C].
    const elongated = { volumeMm3: (Math.PI * 40 * 10 * 10) / 6, extentMm: [40, 10, 10] as Vec3 };
    expect(Math.cbrt(40 * 10 * 10)).toBeCloseTo(15.874, 3);
    expect(tumourSizeMm(elongated)).toBe(40);
  });
});

describe('where a point lies in the liver', () => {
  it('places the centre of the box in the middle thirds', () => {
    expect(thirdsInLiver([-50, 0, 0], liver)).toEqual([1, 1, 1]);
  });

  it('fits segment VII in the right posterior superior corner and not segment III at all', () => {
    const corner: Vec3 = [-95, 45, 55];
    expect(thirdsInLiver(corner, liver)).toEqual([0, 2, 2]);
    expect(positionMismatch('VII', corner, liver)).toBe(0);
    // III: left lateral, anterior, inferior [M] — all three axes miss.
    expect(positionMismatch('III', corner, liver)).toBe(1);
  });
});

describe('suggestLesionLinks (a suggestion only)', () => {
  it('links by size whatever the order of tumours and lesions', () => {
    const links = suggestLesionLinks({
      tumours: [sphere('small', 18), sphere('large', 24)],
      lesions: [lesion('viii', 'VIII', 24), lesion('vi', 'VI', 18)],
      liver: null,
    });
    expect(Object.fromEntries(links)).toEqual({ small: 'vi', large: 'viii' });
  });

  it('breaks a near-tie of sizes by position in the liver', () => {
    const tumours = [
      sphere('right', 20, rightPosteriorInferior),
      sphere('left', 21, leftPosteriorSuperior),
    ];
    const lesions = [lesion('ii', 'II', 20), lesion('vi', 'VI', 21)];
    // Size alone pairs the 20 mm tumour with the 20 mm lesion…
    expect(Object.fromEntries(suggestLesionLinks({ tumours, lesions, liver: null }))).toEqual({
      right: 'ii',
      left: 'vi',
    });
    // …but sizes within 5 % of each other leave it to position: VI is right posterior inferior.
    expect(Object.fromEntries(suggestLesionLinks({ tumours, lesions, liver }))).toEqual({
      right: 'vi',
      left: 'ii',
    });
  });

  it('lets size outweigh position when the sizes clearly differ', () => {
    const links = suggestLesionLinks({
      tumours: [
        sphere('right', 30, rightPosteriorInferior),
        sphere('left', 15, leftPosteriorSuperior),
      ],
      lesions: [lesion('vi', 'VI', 15), lesion('ii', 'II', 30)],
      liver,
    });
    expect(Object.fromEntries(links)).toEqual({ right: 'ii', left: 'vi' });
  });

  it('suggests nothing for a tumour with no lesion within a factor of two of its size', () => {
    const links = suggestLesionLinks({
      tumours: [sphere('tiny', 10)],
      lesions: [lesion('big', 'VIII', 25)],
      liver,
    });
    expect(links.get('tiny')).toBeNull();
  });

  it('links each lesion at most once, leaving the extra tumour without one', () => {
    const links = suggestLesionLinks({
      tumours: [sphere('a', 24), sphere('b', 18), sphere('c', 17)],
      lesions: [lesion('viii', 'VIII', 24), lesion('vi', 'VI', 18)],
      liver: null,
    });
    expect(Object.fromEntries(links)).toEqual({ a: 'viii', b: 'vi', c: null });
  });

  it('links an elongated tumour to the lesion of its length, not of its equivalent diameter', () => {
    const elongated: SuggestionTumour = {
      id: 'long',
      volumeMm3: (Math.PI * 40 * 10 * 10) / 6,
      extentMm: [40, 10, 10],
      centroidLps: [0, 0, 0],
    };
    const links = suggestLesionLinks({
      tumours: [elongated],
      lesions: [lesion('sixteen', 'V', 16), lesion('thirty-eight', 'V', 38)],
      liver: null,
    });
    expect(links.get('long')).toBe('thirty-eight');
  });

  it('still pairs by size when the case has more lesions than the exact search takes', () => {
    const lesions = Array.from({ length: 16 }, (_, index) =>
      lesion(`l${10 + index}`, 'VIII', 10 + index),
    );
    const links = suggestLesionLinks({
      tumours: [sphere('twelve', 12), sphere('twenty', 20)],
      lesions,
      liver: null,
    });
    expect(Object.fromEntries(links)).toEqual({ twelve: 'l12', twenty: 'l20' });
  });
});
