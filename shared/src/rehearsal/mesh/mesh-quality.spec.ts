import { describe, expect, it } from 'vitest';
import { meshQuality, shapeOfCorners } from './mesh-quality';
import { boundaryFacesOf } from './mesh-faces';

const SHEWCHUK =
  'Shewchuk, "What is a good linear finite element?", 2002 (from memory): dihedral angles and R/r';
const toDeg = (radians: number) => (radians * 180) / Math.PI;

/** The regular tetrahedron of edge 2√2 on alternate corners of a cube, positively ordered. */
const REGULAR = [1, 1, 1, -1, 1, -1, 1, -1, -1, -1, -1, 1];

describe('tet shape', () => {
  it(`gives the regular tetrahedron all six dihedral angles arccos(1/3) ≈ 70.53° and aspect ratio 1 (${SHEWCHUK})`, () => {
    const shape = shapeOfCorners(REGULAR);
    expect(toDeg(shape.minDihedralRad)).toBeCloseTo(toDeg(Math.acos(1 / 3)), 10);
    expect(toDeg(shape.maxDihedralRad)).toBeCloseTo(toDeg(Math.acos(1 / 3)), 10);
    expect(toDeg(Math.acos(1 / 3))).toBeCloseTo(70.5288, 4);
    expect(shape.aspectRatio).toBeCloseTo(1, 12);
    // Volume of a regular tet of edge a: a³/(6√2), here a = 2√2.
    expect(shape.volumeMm3).toBeCloseTo((2 * Math.SQRT2) ** 3 / (6 * Math.SQRT2), 12);
  });

  it('gives the corner tet (0, e1, e2, e3) right angles at the axes, arccos(1/√3) at the slanted face, R/(3r) = (√3 + 1)/2 (elementary geometry)', () => {
    // Faces x = 0, y = 0, z = 0 meet at 90°; each meets x + y + z = 1 at arccos(1/√3) ≈ 54.74°.
    // Circumcentre (½, ½, ½): R = √3/2; inradius r = 3V / S = 1/(3 + √3).
    const shape = shapeOfCorners([0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(toDeg(shape.minDihedralRad)).toBeCloseTo(toDeg(Math.acos(1 / Math.sqrt(3))), 10);
    expect(toDeg(shape.maxDihedralRad)).toBeCloseTo(90, 10);
    expect(shape.aspectRatio).toBeCloseTo((Math.sqrt(3) + 1) / 2, 12);
    expect(shape.volumeMm3).toBeCloseTo(1 / 6, 14);
  });

  it(`detects a sliver: four nearly coplanar corners give a dihedral angle near 0 and a huge aspect ratio (${SHEWCHUK})`, () => {
    // A square's corners lifted alternately by ±h: every edge has a good length, the volume
    // and two dihedral angles vanish as h → 0 — the classic sliver.
    const h = 1e-3;
    const sliver = [0, 0, h, 1, 0, -h, 1, 1, h, 0, 1, -h];
    const shape = shapeOfCorners(sliver);
    expect(toDeg(shape.minDihedralRad)).toBeLessThan(0.5);
    expect(toDeg(shape.maxDihedralRad)).toBeGreaterThan(179.5);
    expect(shape.aspectRatio).toBeGreaterThan(100);
    expect(Math.abs(shape.volumeMm3)).toBeLessThan(1e-3);
  });

  it('reads an inverted tet as negative volume with the same angles, and a flat one as aspect Infinity', () => {
    const mirrored = [...REGULAR];
    [mirrored[3], mirrored[6]] = [mirrored[6], mirrored[3]];
    [mirrored[4], mirrored[7]] = [mirrored[7], mirrored[4]];
    [mirrored[5], mirrored[8]] = [mirrored[8], mirrored[5]];
    const shape = shapeOfCorners(mirrored);
    expect(shape.volumeMm3).toBeLessThan(0);
    expect(toDeg(shape.minDihedralRad)).toBeCloseTo(toDeg(Math.acos(1 / 3)), 10);
    expect(shapeOfCorners([0, 0, 0, 1, 0, 0, 0, 1, 0, 1, 1, 0]).aspectRatio).toBe(Infinity);
  });
});

describe('mesh quality', () => {
  it('sums volumes and takes the extremes over the tets of a mesh', () => {
    // The regular tet and the corner tet, sharing no node.
    const nodes = Float64Array.from([...REGULAR, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1]);
    const tets = Uint32Array.from([0, 1, 2, 3, 4, 5, 6, 7]);
    const quality = meshQuality({
      nodes,
      tets,
      boundaryFaces: boundaryFacesOf(tets, 8),
      cellMm: 1,
    });
    expect(quality.tetCount).toBe(2);
    expect(quality.nodeCount).toBe(8);
    expect(quality.minDihedralDeg).toBeCloseTo(toDeg(Math.acos(1 / Math.sqrt(3))), 10);
    expect(quality.maxAspectRatio).toBeCloseTo((Math.sqrt(3) + 1) / 2, 12);
    expect(quality.meanAspectRatio).toBeCloseTo((1 + (Math.sqrt(3) + 1) / 2) / 2, 12);
    expect(quality.volumeMm3).toBeCloseTo((2 * Math.SQRT2) ** 3 / (6 * Math.SQRT2) + 1 / 6, 12);
  });
});
