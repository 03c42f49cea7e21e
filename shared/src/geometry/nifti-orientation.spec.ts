import { describe, expect, it } from 'vitest';
import {
  geometryFromNiftiAffine,
  NiftiOrientationError,
  niftiQuaternionToRotation,
  niftiSpatialUnitMm,
  niftiWorldAffine,
  qformToAffine,
  rasToLpsAffine,
  sformToAffine,
  type AffineMatrix,
  type Matrix3,
  type NiftiOrientationFields,
  type NiftiQform,
} from './nifti-orientation';
import { geometryFromSlices, voxelToLps } from './patient-geometry';
import { cross, dot, type Vec3 } from './vector';

const NIFTI1_H = 'NIfTI-1 header documentation, nifti1.h, method 2';

function expectMatrixClose(actual: readonly (readonly number[])[], expected: number[][]): void {
  expected.forEach((row, r) =>
    row.forEach((value, c) => expect(actual[r][c]).toBeCloseTo(value, 9)),
  );
}

/** Rotation by `angleRad` about the unit `axis`: Rodrigues' formula (common practice). */
function rodrigues(axis: Vec3, angleRad: number): Matrix3 {
  const [x, y, z] = axis;
  const c = Math.cos(angleRad);
  const s = Math.sin(angleRad);
  const t = 1 - c;
  return [
    [t * x * x + c, t * x * y - s * z, t * x * z + s * y],
    [t * x * y + s * z, t * y * y + c, t * y * z - s * x],
    [t * x * z - s * y, t * y * z + s * x, t * z * z + c],
  ];
}

describe(`quaternion to rotation, ${NIFTI1_H}`, () => {
  it.each([
    {
      name: 'no rotation',
      quaternion: [0, 0, 0],
      matrix: [
        [1, 0, 0],
        [0, 1, 0],
        [0, 0, 1],
      ],
    },
    {
      name: 'a quarter turn about z (b = c = 0, d = sin 45°) [C]',
      quaternion: [0, 0, Math.SQRT1_2],
      matrix: [
        [0, -1, 0],
        [1, 0, 0],
        [0, 0, 1],
      ],
    },
    {
      name: 'a half turn about x (b = 1, so a = 0) [C]',
      quaternion: [1, 0, 0],
      matrix: [
        [1, 0, 0],
        [0, -1, 0],
        [0, 0, -1],
      ],
    },
    {
      name: 'a half turn about y given with float rounding (c = 1.0000001)',
      quaternion: [0, 1.0000001, 0],
      matrix: [
        [-1, 0, 0],
        [0, 1, 0],
        [0, 0, -1],
      ],
    },
  ] as { name: string; quaternion: Vec3; matrix: number[][] }[])(
    'gives $name',
    ({ quaternion, matrix }) => {
      expectMatrixClose(niftiQuaternionToRotation(quaternion), matrix);
    },
  );

  it.each([
    { axis: [0.48, 0.6, 0.64] as Vec3, angleRad: 0.7 },
    { axis: [-0.6, 0, 0.8] as Vec3, angleRad: 2.9 },
    { axis: [0, 1, 0] as Vec3, angleRad: -1.2 },
    { axis: [0.36, 0.48, -0.8] as Vec3, angleRad: 4 },
  ])(
    'agrees with Rodrigues’ formula for $angleRad rad about $axis (b, c, d = sin(θ/2)·axis)',
    ({ axis, angleRad }) => {
      const half = Math.sin(angleRad / 2);
      let quaternion: Vec3 = [axis[0] * half, axis[1] * half, axis[2] * half];
      // The header keeps a ≥ 0: a rotation with cos(θ/2) < 0 is stored as its negation.
      if (Math.cos(angleRad / 2) < 0) quaternion = [-quaternion[0], -quaternion[1], -quaternion[2]];
      expectMatrixClose(niftiQuaternionToRotation(quaternion), rodrigues(axis, angleRad));
    },
  );
});

/** The FSL MNI152 1 mm template header (from memory): qform and sform agree. */
const MNI152_QFORM: NiftiQform = {
  quaternion: [0, 1, 0],
  offsetRas: [90, -126, -72],
  voxelSize: [1, 1, 1],
  qfac: -1,
};
const MNI152_SFORM: AffineMatrix = [
  [-1, 0, 0, 90],
  [0, 1, 0, -126],
  [0, 0, 1, -72],
  [0, 0, 0, 1],
];

describe(`qform to affine, ${NIFTI1_H}`, () => {
  it('rebuilds the sform of the MNI152 1 mm template from its qform (from memory)', () => {
    expectMatrixClose(qformToAffine(MNI152_QFORM), MNI152_SFORM);
  });

  it('scales the columns by pixdim and negates the third when qfac is −1', () => {
    const affine = qformToAffine({
      quaternion: [0, 0, Math.SQRT1_2],
      offsetRas: [1, 2, 3],
      voxelSize: [0.5, 0.75, 2],
      qfac: -1,
    });
    expectMatrixClose(affine, [
      [0, -0.75, 0, 1],
      [0.5, 0, 0, 2],
      [0, 0, -2, 3],
      [0, 0, 0, 1],
    ]);
  });

  it('reads a pixdim of 0 as 1 and a qfac of 0 as +1 (nifti1_io.c, nifti_quatern_to_mat44)', () => {
    const affine = qformToAffine({
      quaternion: [0, 0, 0],
      offsetRas: [0, 0, 0],
      voxelSize: [0, 2, 3],
      qfac: 0,
    });
    expectMatrixClose(affine, [
      [1, 0, 0, 0],
      [0, 2, 0, 0],
      [0, 0, 3, 0],
      [0, 0, 0, 1],
    ]);
  });
});

describe('choice of affine (sform when sform_code > 0, else qform; common practice)', () => {
  const fields: NiftiOrientationFields = {
    sformCode: 4,
    qformCode: 1,
    sformRows: [
      [2, 0, 0, 10],
      [0, 2, 0, 20],
      [0, 0, 2, 30],
    ],
    qform: MNI152_QFORM,
  };

  it('takes the sform when both are set', () => {
    expect(niftiWorldAffine(fields)).toEqual(sformToAffine(...fields.sformRows));
  });

  it('takes the qform when only it is set', () => {
    expect(niftiWorldAffine({ ...fields, sformCode: 0 })).toEqual(qformToAffine(MNI152_QFORM));
  });

  it('answers null for method 1 (both codes 0), which places the grid nowhere', () => {
    expect(niftiWorldAffine({ ...fields, sformCode: 0, qformCode: 0 })).toBeNull();
  });
});

describe('spatial units of xyzt_units (nifti1.h: NIFTI_UNITS_METER 1, _MM 2, _MICRON 3)', () => {
  it.each([
    { xyztUnits: 0, mm: 1, name: 'unknown, read as millimetres' },
    { xyztUnits: 1, mm: 1000, name: 'metres' },
    { xyztUnits: 2, mm: 1, name: 'millimetres' },
    { xyztUnits: 3, mm: 0.001, name: 'micrometres' },
    { xyztUnits: 2 + 8, mm: 1, name: 'millimetres with seconds (time bits ignored)' },
    { xyztUnits: 1 + 16, mm: 1000, name: 'metres with milliseconds' },
  ])('gives $mm mm per unit for code $xyztUnits ($name)', ({ xyztUnits, mm }) => {
    expect(niftiSpatialUnitMm(xyztUnits)).toBe(mm);
  });
});

describe('RAS to LPS (NIfTI-1 world coordinates are RAS; RAS → LPS flips x and y)', () => {
  it('negates the x and y rows, translation included, and keeps z', () => {
    expectMatrixClose(rasToLpsAffine(MNI152_SFORM), [
      [1, 0, 0, -90],
      [0, -1, 0, 126],
      [0, 0, 1, -72],
      [0, 0, 0, 1],
    ]);
  });

  it('places the MNI152 origin voxel (90, −126, −72) RAS at (−90, 126, −72) LPS', () => {
    const geometry = geometryFromNiftiAffine(MNI152_SFORM, [182, 218, 182]);
    expectMatrixClose(
      [geometry.originLps, geometry.spacingMm],
      [
        [-90, 126, -72],
        [1, 1, 1],
      ],
    );
    // +i runs towards the patient's left (RAS −x), +j anterior (RAS +y), +k towards the head.
    expectMatrixClose(geometry.direction, [
      [1, 0, 0],
      [0, -1, 0],
      [0, 0, 1],
    ]);
  });

  it('maps any voxel to the flipped RAS position of the affine', () => {
    const affine: AffineMatrix = [
      [-0.9, 0.1, 0.05, 12],
      [0.12, 0.95, -0.2, -30],
      [-0.03, 0.19, 2.4, 55],
      [0, 0, 0, 1],
    ];
    const orthogonal = orthogonalised(affine);
    const geometry = geometryFromNiftiAffine(orthogonal, [64, 64, 40]);
    for (const voxel of [
      [0, 0, 0],
      [10, 20, 30],
      [63.5, 1.25, 7],
    ] as Vec3[]) {
      const ras = [0, 1, 2].map(
        (row) =>
          orthogonal[row][0] * voxel[0] +
          orthogonal[row][1] * voxel[1] +
          orthogonal[row][2] * voxel[2] +
          orthogonal[row][3],
      );
      const lps = voxelToLps(geometry, voxel);
      expect(lps[0]).toBeCloseTo(-ras[0], 9);
      expect(lps[1]).toBeCloseTo(-ras[1], 9);
      expect(lps[2]).toBeCloseTo(ras[2], 9);
    }
  });
});

/** The affine's columns made perpendicular (Gram–Schmidt), each keeping its length. */
function orthogonalised(affine: AffineMatrix): AffineMatrix {
  const column = (c: number): Vec3 => [affine[0][c], affine[1][c], affine[2][c]];
  const columns = [column(0), column(1), column(2)];
  const lengths = columns.map((vector) => Math.sqrt(dot(vector, vector)));
  const units: Vec3[] = [];
  for (const vector of columns) {
    let rest = vector;
    for (const unit of units) {
      const along = dot(rest, unit);
      rest = [rest[0] - along * unit[0], rest[1] - along * unit[1], rest[2] - along * unit[2]];
    }
    const length = Math.sqrt(dot(rest, rest));
    units.push([rest[0] / length, rest[1] / length, rest[2] / length]);
  }
  const row = (r: number): [number, number, number, number] => [
    units[0][r] * lengths[0],
    units[1][r] * lengths[1],
    units[2][r] * lengths[2],
    affine[r][3],
  ];
  return [row(0), row(1), row(2), [0, 0, 0, 1]];
}

describe('NIfTI and DICOM describe one grid (DICOM PS3.3 C.7.6.2.1.1; nifti1.h)', () => {
  it('gives the DICOM series’ geometry for the NIfTI affine of the same grid', () => {
    const orientation = [0.94, 0.342, 0, -0.342, 0.94, 0].map(
      (value) => value / Math.hypot(0.94, 0.342),
    );
    const x: Vec3 = [orientation[0], orientation[1], orientation[2]];
    const y: Vec3 = [orientation[3], orientation[4], orientation[5]];
    const normal = cross(x, y);
    const slices = [0, 1, 2, 3].map((k) => ({
      imagePositionPatient: [-160 + 3 * normal[0] * k, -180 + 3 * normal[1] * k, 40 + 3 * k],
      imageOrientationPatient: orientation,
      pixelSpacing: [0.9, 0.8],
      rows: 200,
      columns: 220,
    }));
    const dicom = geometryFromSlices(slices).geometry;
    // The NIfTI writer's affine: columns X·Δi, Y·Δj, Z·Δk and origin S, with x and y negated.
    const flip = [-1, -1, 1];
    const row = (r: number): [number, number, number, number] => [
      flip[r] * x[r] * 0.8,
      flip[r] * y[r] * 0.9,
      flip[r] * normal[r] * 3,
      flip[r] * slices[0].imagePositionPatient[r],
    ];
    const nifti = geometryFromNiftiAffine([row(0), row(1), row(2), [0, 0, 0, 1]], [220, 200, 4]);
    for (const voxel of [
      [0, 0, 0],
      [219, 199, 3],
      [100.5, 40.25, 1.5],
    ] as Vec3[]) {
      const fromDicom = voxelToLps(dicom, voxel);
      voxelToLps(nifti, voxel).forEach((value, axis) =>
        expect(value).toBeCloseTo(fromDicom[axis], 9),
      );
    }
  });
});

describe('geometry from an affine', () => {
  it('keeps a left-handed grid (qfac −1) with k running along −(X × Y)', () => {
    const geometry = geometryFromNiftiAffine(qformToAffine(MNI152_QFORM), [182, 218, 182]);
    const [x, y, z] = geometry.direction;
    expect(dot(cross(x, y), z)).toBeCloseTo(-1, 12);
  });

  it('scales an affine in metres to millimetres', () => {
    const metres: AffineMatrix = [
      [0.001, 0, 0, 0.1],
      [0, 0.001, 0, 0.2],
      [0, 0, 0.003, 0.3],
      [0, 0, 0, 1],
    ];
    const geometry = geometryFromNiftiAffine(metres, [10, 10, 10], niftiSpatialUnitMm(1));
    expectMatrixClose(
      [geometry.spacingMm, geometry.originLps],
      [
        [1, 1, 3],
        [-100, -200, 300],
      ],
    );
  });

  it.each([
    {
      name: 'a shear of 0.1 between the i and j axes',
      affine: [
        [1, 0.1, 0, 0],
        [0, 1, 0, 0],
        [0, 0, 1, 0],
        [0, 0, 0, 1],
      ],
      problem: 'sheared',
      message: /not perpendicular \(cosine 0.0995\)/,
    },
    {
      name: 'a zero k axis',
      affine: [
        [1, 0, 0, 0],
        [0, 1, 0, 0],
        [0, 0, 0, 0],
        [0, 0, 0, 1],
      ],
      problem: 'singular',
      message: /voxel axis of the affine has no length/,
    },
    {
      name: 'a projective last row',
      affine: [
        [1, 0, 0, 0],
        [0, 1, 0, 0],
        [0, 0, 1, 0],
        [0, 0, 0.5, 1],
      ],
      problem: 'not-affine',
      message: /last row of the affine must be \[0, 0, 0, 1\], got \[0, 0, 0.5, 1\]/,
    },
  ] as { name: string; affine: AffineMatrix; problem: string; message: RegExp }[])(
    'refuses $name',
    ({ affine, problem, message }) => {
      let refusal: unknown;
      try {
        geometryFromNiftiAffine(affine, [4, 4, 4]);
      } catch (error) {
        refusal = error;
      }
      expect(refusal).toBeInstanceOf(NiftiOrientationError);
      expect(refusal).toMatchObject({ problem });
      expect(String(refusal)).toMatch(message);
    },
  );
});
