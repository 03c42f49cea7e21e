// Types for the parts of two untyped npm packages that distance-transform.spec.ts uses as a
// reference: `distance-transform` (scijs, Meijster's algorithm) and `ndarray`, its input.
declare module 'ndarray' {
  export interface NdArray {
    data: Float64Array;
    shape: number[];
    stride: number[];
    get(...indices: number[]): number;
  }
  function ndarray(data: Float64Array, shape: number[], stride?: number[]): NdArray;
  export default ndarray;
}

declare module 'distance-transform' {
  import type { NdArray } from 'ndarray';
  /** Replaces each value by its distance to the nearest non-zero entry, in place (p = 2). */
  function distanceTransform(array: NdArray, p?: number): NdArray;
  export default distanceTransform;
}
