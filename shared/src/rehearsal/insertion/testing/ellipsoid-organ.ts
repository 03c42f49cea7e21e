/**
 * An ellipsoidal "organ" for the insertion rehearsal's tests and benchmark (not a patient): an
 * ellipsoid painted on a voxel grid (a voxel is labelled when its centre lies inside) and meshed
 * by the mesh module. Positions LPS millimetres, the ellipsoid centred at the origin.
 */
import type { VolumeGeometry } from '../../../geometry/patient-geometry';
import type { Vec3 } from '../../../geometry/vector';
import { buildOrganMesh } from '../../mesh/organ-mesh';
import type { TetMesh } from '../../mesh/tet-mesh';

/** An axis-aligned grid of cubic voxels of `voxelMm` centred on the origin (LPS mm). */
export function centredGeometry(dimensions: Vec3, voxelMm: number): VolumeGeometry {
  return {
    dimensions,
    spacingMm: [voxelMm, voxelMm, voxelMm],
    originLps: dimensions.map((n) => (-(n - 1) / 2) * voxelMm) as Vec3,
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
  };
}

/** The mesh of an ellipsoid with semi-axes `semiAxesMm` on voxels of `voxelMm`, cells of `cellMm`. */
export function ellipsoidOrganMesh(semiAxesMm: Vec3, cellMm: number, voxelMm = 2): TetMesh {
  const dimensions = semiAxesMm.map((a) => 2 * Math.ceil(a / voxelMm) + 7) as Vec3;
  const geometry = centredGeometry(dimensions, voxelMm);
  const labels = new Uint8Array(dimensions[0] * dimensions[1] * dimensions[2]);
  let index = 0;
  for (let k = 0; k < dimensions[2]; k++) {
    const z = geometry.originLps[2] + k * voxelMm;
    for (let j = 0; j < dimensions[1]; j++) {
      const y = geometry.originLps[1] + j * voxelMm;
      for (let i = 0; i < dimensions[0]; i++, index++) {
        const x = geometry.originLps[0] + i * voxelMm;
        const r = (x / semiAxesMm[0]) ** 2 + (y / semiAxesMm[1]) ** 2 + (z / semiAxesMm[2]) ** 2;
        if (r <= 1) labels[index] = 1;
      }
    }
  }
  return buildOrganMesh({ labels, geometry, organLabels: [1], cellMm }).mesh;
}
