import { describe, expect, it } from 'vitest';
import {
  geometryFromSlices,
  lpsToVoxel,
  SeriesGeometryError,
  voxelToLps,
  type SeriesGeometryProblem,
  type SliceGeometryAttributes,
} from './patient-geometry';
import { cross, dot, type Vec3 } from './vector';

const PS3_3 = 'DICOM PS3.3 C.7.6.2.1.1';

interface SeriesPlan {
  orientation: number[];
  firstPosition: Vec3;
  pixelSpacing?: [number, number];
  sliceSpacingMm?: number;
  count?: number;
  rows?: number;
  columns?: number;
}

/** Slices stacked along X × Y from the first position, as a scanner writes them. */
function series(plan: SeriesPlan): SliceGeometryAttributes[] {
  const x: Vec3 = [plan.orientation[0], plan.orientation[1], plan.orientation[2]];
  const y: Vec3 = [plan.orientation[3], plan.orientation[4], plan.orientation[5]];
  const normal = cross(x, y);
  const spacingMm = plan.sliceSpacingMm ?? 2.5;
  return Array.from({ length: plan.count ?? 5 }, (_, k) => ({
    imagePositionPatient: plan.firstPosition.map(
      (value, axis) => value + k * spacingMm * normal[axis],
    ),
    imageOrientationPatient: [...plan.orientation],
    pixelSpacing: plan.pixelSpacing ?? [0.7, 0.8],
    rows: plan.rows ?? 512,
    columns: plan.columns ?? 512,
  }));
}

const AXIAL = [1, 0, 0, 0, 1, 0];
const CORONAL = [1, 0, 0, 0, 0, -1];

/** Rotation about a unit axis by an angle (Rodrigues' formula, common practice). */
function rotate(vector: Vec3, axis: Vec3, angleRad: number): Vec3 {
  const cosine = Math.cos(angleRad);
  const sine = Math.sin(angleRad);
  const across = cross(axis, vector);
  const along = dot(axis, vector) * (1 - cosine);
  return [0, 1, 2].map(
    (index) => vector[index] * cosine + across[index] * sine + axis[index] * along,
  ) as Vec3;
}

/** An oblique orientation: axial turned 25° about z, then −15° about x, then 10° about y. */
function obliqueOrientation(): number[] {
  const turn = (vector: Vec3) =>
    rotate(rotate(rotate(vector, [0, 0, 1], 0.436332), [1, 0, 0], -0.261799), [0, 1, 0], 0.174533);
  return [...turn([1, 0, 0]), ...turn([0, 1, 0])];
}

describe(`worked examples computed by hand from ${PS3_3} [C]`, () => {
  it.each([
    {
      name: 'axial',
      orientation: AXIAL,
      firstPosition: [-175, -200, 50] as Vec3,
      expected: [-95, -165, 50],
    },
    {
      name: 'coronal',
      orientation: CORONAL,
      firstPosition: [-250, 30, 120] as Vec3,
      expected: [-170, 30, 85],
    },
  ])(
    'places voxel i = 100, j = 50 of the $name example at $expected',
    ({ orientation, firstPosition, expected }) => {
      const { geometry } = geometryFromSlices(
        series({ orientation, firstPosition, pixelSpacing: [0.7, 0.8], count: 2 }),
      );
      const point = voxelToLps(geometry, [100, 50, 0]);
      expected.forEach((value, axis) => expect(point[axis]).toBeCloseTo(value, 10));
      lpsToVoxel(geometry, point).forEach((value, axis) =>
        expect(value).toBeCloseTo([100, 50, 0][axis], 10),
      );
    },
  );

  it('takes Δi from PixelSpacing[1] and Δj from PixelSpacing[0]', () => {
    const { geometry } = geometryFromSlices(
      series({ orientation: AXIAL, firstPosition: [0, 0, 0], pixelSpacing: [0.7, 0.8] }),
    );
    expect(geometry.spacingMm[0]).toBe(0.8);
    expect(geometry.spacingMm[1]).toBe(0.7);
    expect(geometry.dimensions).toEqual([512, 512, 5]);
  });

  it('points the coronal slice normal X × Y posterior, +y in LPS', () => {
    const { geometry } = geometryFromSlices(
      series({ orientation: CORONAL, firstPosition: [0, 0, 0] }),
    );
    geometry.direction[2].forEach((value, axis) => expect(value).toBeCloseTo([0, 1, 0][axis], 12));
  });
});

describe(`an oblique series, ${PS3_3}`, () => {
  const slices = series({
    orientation: obliqueOrientation(),
    firstPosition: [-120.5, 33.25, -410],
    pixelSpacing: [0.65, 0.65],
    sliceSpacingMm: 1.25,
    count: 9,
    rows: 384,
    columns: 448,
  });
  const { geometry, sliceOrder } = geometryFromSlices(slices);

  it('has a right-handed direction: Z = X × Y, determinant +1', () => {
    const [x, y, z] = geometry.direction;
    cross(x, y).forEach((value, axis) => expect(z[axis]).toBeCloseTo(value, 12));
    expect(dot(x, cross(y, z))).toBeCloseTo(1, 12);
  });

  it('puts every pixel where its own slice places it (the section’s equation, per slice)', () => {
    sliceOrder.forEach((input, k) => {
      const slice = slices[input];
      const [rowSpacing, columnSpacing] = slice.pixelSpacing;
      const orientation = slice.imageOrientationPatient;
      for (const [i, j] of [
        [0, 0],
        [447, 0],
        [0, 383],
        [211, 97],
      ]) {
        const point = voxelToLps(geometry, [i, j, k]);
        for (let axis = 0; axis < 3; axis++) {
          const expected =
            slice.imagePositionPatient[axis] +
            orientation[axis] * columnSpacing * i +
            orientation[axis + 3] * rowSpacing * j;
          expect(point[axis]).toBeCloseTo(expected, 9);
        }
      }
    });
  });

  it.each([
    [0, 0, 0],
    [447, 383, 8],
    [12.25, 300.5, 3.75],
    [-3, 500, 11],
  ] as Vec3[])('maps voxel %s to LPS and back', (...voxel) => {
    const back = lpsToVoxel(geometry, voxelToLps(geometry, voxel));
    voxel.forEach((value, axis) => expect(back[axis]).toBeCloseTo(value, 9));
  });
});

describe('slice order along the normal', () => {
  const ascending = series({ orientation: AXIAL, firstPosition: [-175, -200, 50], count: 6 });

  it('stacks reverse-ordered slices from the lowest position along the normal', () => {
    const { geometry, sliceOrder } = geometryFromSlices([...ascending].reverse());
    expect(sliceOrder).toEqual([5, 4, 3, 2, 1, 0]);
    expect(geometry.originLps).toEqual([-175, -200, 50]);
    expect(geometry.spacingMm[2]).toBeCloseTo(2.5, 12);
  });

  it('answers the order of shuffled slices', () => {
    const shuffled = [3, 0, 5, 1, 4, 2].map((index) => ascending[index]);
    expect(geometryFromSlices(shuffled).sliceOrder).toEqual([1, 3, 5, 0, 4, 2]);
  });

  it('takes Δk as the mean spacing when positions jitter within tolerance', () => {
    const jittered = ascending.map((slice, k) => ({
      ...slice,
      imagePositionPatient: [-175, -200, 50 + 2.5 * k + (k === 5 ? 0.02 : 0)],
    }));
    expect(geometryFromSlices(jittered).geometry.spacingMm[2]).toBeCloseTo(12.52 / 5, 12);
  });
});

function refusalOf(slices: SliceGeometryAttributes[]): SeriesGeometryError {
  try {
    geometryFromSlices(slices);
  } catch (error) {
    if (error instanceof SeriesGeometryError) return error;
    throw error;
  }
  throw new Error('the series was accepted');
}

/** The axial series with slice `index` changed. */
function withSlice(
  index: number,
  change: Partial<SliceGeometryAttributes>,
  count = 5,
): SliceGeometryAttributes[] {
  return series({ orientation: AXIAL, firstPosition: [-175, -200, 50], count }).map((slice, k) =>
    k === index ? { ...slice, ...change } : slice,
  );
}

/** The axial series (2.5 mm apart) with slice `index` at z = `zMm`. */
function withSliceAt(index: number, zMm: number, count = 5): SliceGeometryAttributes[] {
  return withSlice(index, { imagePositionPatient: [-175, -200, zMm] }, count);
}

describe('refused series', () => {
  it.each<{
    name: string;
    slices: SliceGeometryAttributes[];
    problem: SeriesGeometryProblem;
    message: RegExp;
    sliceIndices: number[];
  }>([
    {
      name: 'a single slice',
      slices: withSliceAt(0, 50, 1),
      problem: 'too-few-slices',
      message: /at least 2 slices; the series has 1/,
      sliceIndices: [],
    },
    {
      name: 'no slice',
      slices: [],
      problem: 'too-few-slices',
      message: /the series has 0/,
      sliceIndices: [],
    },
    {
      name: 'an Image Position (Patient) of 2 values',
      slices: withSlice(2, { imagePositionPatient: [1, 2] }),
      problem: 'invalid-attribute',
      message: /Slice 3: Image Position \(Patient\) must hold 3 finite numbers/,
      sliceIndices: [2],
    },
    {
      name: 'a NaN in Image Orientation (Patient)',
      slices: withSlice(1, { imageOrientationPatient: [1, 0, 0, 0, Number.NaN, 0] }),
      problem: 'invalid-attribute',
      message: /Slice 2: Image Orientation \(Patient\) must hold 6 finite numbers/,
      sliceIndices: [1],
    },
    {
      name: 'a Pixel Spacing of 0',
      slices: withSlice(0, { pixelSpacing: [0, 0.8] }),
      problem: 'invalid-attribute',
      message: /Pixel Spacing must hold 2 positive numbers/,
      sliceIndices: [0],
    },
    {
      name: 'an infinite Pixel Spacing',
      slices: withSlice(1, { pixelSpacing: [0.7, Infinity] }),
      problem: 'invalid-attribute',
      message: /Slice 2: Pixel Spacing must hold 2 positive numbers/,
      sliceIndices: [1],
    },
    {
      name: 'a fractional number of rows',
      slices: withSlice(4, { rows: 511.5 }),
      problem: 'invalid-attribute',
      message: /Slice 5: Rows must be a positive integer/,
      sliceIndices: [4],
    },
    {
      name: 'row and column directions 5.7° from perpendicular',
      slices: withSlice(0, { imageOrientationPatient: [1, 0, 0, 0.0995, 0.995, 0] }),
      problem: 'non-orthonormal-orientation',
      message: /Slice 1: Image Orientation \(Patient\) is not two perpendicular unit vectors/,
      sliceIndices: [0],
    },
    {
      name: 'a row direction of length 1.01',
      slices: withSlice(3, { imageOrientationPatient: [1.01, 0, 0, 0, 1, 0] }),
      problem: 'non-orthonormal-orientation',
      message: /Slice 4: .* not two perpendicular unit vectors/,
      sliceIndices: [3],
    },
    {
      name: 'one slice turned by 1° about z',
      slices: withSlice(2, {
        imageOrientationPatient: [0.999848, 0.017452, 0, -0.017452, 0.999848, 0],
      }),
      problem: 'mixed-orientation',
      message: /Slice 3 is oriented differently from slice 1 .*mixes orientations/,
      sliceIndices: [0, 2],
    },
    {
      name: 'one slice of 256 rows among 512',
      slices: withSlice(1, { rows: 256 }),
      problem: 'mixed-size',
      message: /Slice 2 has 256 × 512 pixels \(rows × columns\), slice 1 has 512 × 512/,
      sliceIndices: [0, 1],
    },
    {
      name: 'one slice with a pixel spacing of 0.75 mm among 0.7 mm',
      slices: withSlice(4, { pixelSpacing: [0.75, 0.8] }),
      problem: 'mixed-spacing',
      message: /Slice 5 has a pixel spacing of 0.75 × 0.8 mm, slice 1 has 0.7 × 0.8 mm/,
      sliceIndices: [0, 4],
    },
    {
      name: 'two slices at one position',
      slices: withSliceAt(3, 55),
      problem: 'duplicate-position',
      message: /Two slices lie at the same position \(55.00 mm along the slice normal\)/,
      sliceIndices: [2, 3],
    },
    {
      name: 'a gap of 2 spacings',
      slices: [0, 1, 3, 4, 5].map((k) => withSliceAt(0, 50 + 2.5 * k)[0]),
      problem: 'missing-slice',
      message:
        /52.50 mm and 57.50 mm .* 5.00 mm apart, about 2 × the series spacing of 2.50 mm: 1 slice/,
      sliceIndices: [1, 2],
    },
    {
      name: 'a gap of 3 spacings',
      slices: [0, 1, 2, 5, 6].map((k) => withSliceAt(0, 50 + 2.5 * k)[0]),
      problem: 'missing-slice',
      message: /7.50 mm apart, about 3 × .*: 2 slices are missing between them/,
      sliceIndices: [2, 3],
    },
    {
      name: 'one gap of 2.6 mm among 2.5 mm (4 %, over the 1 % tolerance)',
      slices: [0, 1, 2, 3, 4].map((k) => withSliceAt(0, 50 + 2.5 * k + (k >= 3 ? 0.1 : 0))[0]),
      problem: 'uneven-spacing',
      message: /55.00 mm and 57.60 mm .* 2.60 mm apart, while the series spacing is 2.50 mm/,
      sliceIndices: [2, 3],
    },
    {
      name: 'slices shifted 0.4 mm further left each (a tilted gantry)',
      slices: withSliceAt(0, 50).map((slice, k) => ({
        ...slice,
        imagePositionPatient: [-175, -200 + 0.4 * k, 50 + 2.5 * k],
      })),
      problem: 'sheared-stack',
      message: /Slice 2 of the sorted stack is shifted 0.40 mm within its plane/,
      sliceIndices: [0, 1],
    },
  ])('refuses $name', ({ slices, problem, message, sliceIndices }) => {
    const refusal = refusalOf(slices);
    expect(refusal.problem).toBe(problem);
    expect(refusal.message).toMatch(message);
    expect(refusal.sliceIndices).toEqual(sliceIndices);
  });
});

describe('slice position tolerance: max(0.01 mm, 1 % of the spacing)', () => {
  it.each([
    { spacingMm: 2.5, offsetMm: 0.024, isAccepted: true },
    { spacingMm: 2.5, offsetMm: 0.026, isAccepted: false },
    { spacingMm: 0.5, offsetMm: 0.0095, isAccepted: true },
    { spacingMm: 0.5, offsetMm: 0.0105, isAccepted: false },
  ])(
    'with slices $spacingMm mm apart, one slice off by $offsetMm mm: accepted $isAccepted',
    ({ spacingMm, offsetMm, isAccepted }) => {
      const slices = series({
        orientation: AXIAL,
        firstPosition: [0, 0, 0],
        sliceSpacingMm: spacingMm,
        count: 7,
      }).map((slice, k) =>
        k === 3 ? { ...slice, imagePositionPatient: [0, 0, 3 * spacingMm + offsetMm] } : slice,
      );
      if (isAccepted) expect(() => geometryFromSlices(slices)).not.toThrow();
      else expect(refusalOf(slices).problem).toBe('uneven-spacing');
    },
  );
});
