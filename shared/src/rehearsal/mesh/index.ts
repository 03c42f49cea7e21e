// The organ's tetrahedral mesh for the insertion rehearsal: building it from a label map, its
// faces and quality, and points embedded in it.
export * from './tet-mesh';
export { KUHN_CELL_TETS } from './kuhn-split';
export { WARP_LIMIT_CELLS } from './isosurface-stuffing';
export { meshFaces, boundaryFacesOf, surfaceNodes, type MeshFaces } from './mesh-faces';
export * from './mesh-quality';
export * from './embedding';
export {
  buildOrganMesh,
  MAX_CELL_ELONGATION,
  MAX_CELL_MM,
  MAX_FIELD_VOXELS,
  MAX_LATTICE_CELLS,
  MAX_MESH_CELLS,
  MIN_CELL_MM,
  MIN_DIHEDRAL_DEG,
  MIN_TET_CELL_SHARE,
  type OrganMeshInput,
  type OrganMeshResult,
} from './organ-mesh';
