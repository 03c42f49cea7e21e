/** Messages between the viewer and the surface worker (marching cubes off the page's thread). */
import type { VolumeGeometry } from '@emberline/shared';
import type { SurfaceMesh } from './surface-mesh';

export interface SurfaceRequest {
  labels: Uint8Array | Uint16Array;
  geometry: VolumeGeometry;
  /** The labels to contour, in the order they should arrive. */
  labelValues: number[];
}

export type SurfaceReply =
  | { type: 'surface'; mesh: SurfaceMesh; computeMs: number }
  | { type: 'empty'; labelValue: number }
  | { type: 'surfaces-done'; totalMs: number }
  | { type: 'failed'; message: string };
