// The tissue solver of the insertion rehearsal: corotational linear tetrahedra, backward
// Euler, projected Jacobi-PCG (README.md in this folder). The block matrix and the CG
// internals stay internal; the test meshes live in ./testing.
export * from './fem-errors';
export * from './material';
export { determinant3, rotationOfDeformation, type PolarMethod } from './polar-decomposition';
export { restStiffness, shapeGradients, tetRestData, type TetRestData } from './tet-element';
export type { PcgReport } from './pcg';
export * from './tissue-solver';
