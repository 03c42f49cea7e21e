/**
 * An analytic sphere painted on a voxel grid, for the mesh's tests: a voxel is labelled when its
 * centre lies inside (as a segmentation thresholded at half a voxel would). The truth is the
 * sphere's own geometry, 4/3 π r³ and the distance |x − c| − r; nothing here is an expected
 * result. Test support only (imported by spec files). Positions LPS, millimetres.
 */
import { voxelToLps, type VolumeGeometry } from '../../../geometry/patient-geometry';
import { distance, type Vec3 } from '../../../geometry/vector';

export interface SpherePhantom {
  geometry: VolumeGeometry;
  labels: Uint8Array;
  centreLps: Vec3;
  radiusMm: number;
}

/**
 * A sphere of `radiusMm` labelled `label` on a grid of `spacingMm` with the given directions
 * and origin, wide enough for the sphere and 3 voxels more each side. `offsetVoxels` places
 * the centre off the voxel lattice (in voxels from the grid's middle), so that the lattice of
 * cells does not share the sphere's symmetry.
 */
export function spherePhantom(options: {
  radiusMm: number;
  spacingMm: Vec3;
  direction?: [Vec3, Vec3, Vec3];
  originLps?: Vec3;
  offsetVoxels?: Vec3;
  label?: number;
}): SpherePhantom {
  const { radiusMm, spacingMm } = options;
  const direction = options.direction ?? [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ];
  const originLps = options.originLps ?? [0, 0, 0];
  const offset = options.offsetVoxels ?? [0.3, -0.2, 0.15];
  const dimensions = spacingMm.map((spacing) => 2 * Math.ceil(radiusMm / spacing) + 7) as Vec3;
  const geometry: VolumeGeometry = { dimensions, spacingMm, originLps, direction };
  const centreVoxel = dimensions.map((n, axis) => (n - 1) / 2 + offset[axis]) as Vec3;
  const centreLps = voxelToLps(geometry, centreVoxel);
  const labels = new Uint8Array(dimensions[0] * dimensions[1] * dimensions[2]);
  // The grid is orthonormal: a voxel's distance from the centre is that of its index offsets
  // scaled by the spacings (checked against voxelToLps in a corner of the grid below).
  const [si, sj, sk] = spacingMm;
  let index = 0;
  for (let k = 0; k < dimensions[2]; k++) {
    const dk = ((k - centreVoxel[2]) * sk) ** 2;
    for (let j = 0; j < dimensions[1]; j++) {
      const djk = dk + ((j - centreVoxel[1]) * sj) ** 2;
      for (let i = 0; i < dimensions[0]; i++, index++) {
        if (djk + ((i - centreVoxel[0]) * si) ** 2 <= radiusMm * radiusMm) {
          labels[index] = options.label ?? 1;
        }
      }
    }
  }
  const corner = dimensions.map((n) => n - 1) as Vec3;
  const cornerMm = Math.hypot(
    ...corner.map((c, axis) => (c - centreVoxel[axis]) * spacingMm[axis]),
  );
  if (Math.abs(distance(voxelToLps(geometry, corner), centreLps) - cornerMm) > 1e-9) {
    throw new Error('spherePhantom needs orthonormal directions');
  }
  return { geometry, labels, centreLps, radiusMm };
}
