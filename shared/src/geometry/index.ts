// The vector helpers keep short names (add, dot, distance…); exported as a namespace so that
// they cannot collide with other exports of the shared package.
export * as vector3 from './vector';
export type { Vec3 } from './vector';
export * from './patient-geometry';
export * from './voxel-box';
export * from './nifti-orientation';
export * from './distance-transform';
export * from './path-clearance';
export * from './cell-distance';
