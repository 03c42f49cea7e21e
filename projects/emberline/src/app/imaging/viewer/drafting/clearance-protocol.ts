/**
 * Messages between the viewer and the clearance worker. The worker computes one distance field
 * per structure kind, reporting each as it is done, and answers path measurements in between.
 */
import type { StructureKind, Vec3, VolumeGeometry } from '@emberline/shared';
import type { PathFigures } from './clearance-fields';

export interface ClearanceLoad {
  type: 'load';
  labels: Uint8Array | Uint16Array;
  geometry: VolumeGeometry;
  kinds: { kind: StructureKind; labelValues: number[] }[];
  paddingMm: number;
}

export interface PathRequest {
  entryLps: Vec3;
  targetLps: Vec3;
}

export interface ClearanceMeasure {
  type: 'measure';
  requestId: number;
  paths: PathRequest[];
}

export type ClearanceRequest = ClearanceLoad | ClearanceMeasure;

export interface KindReady {
  type: 'kind-ready';
  kind: StructureKind;
  computeMs: number;
}

export interface FieldsReady {
  type: 'fields-ready';
  /** From the load message's arrival to the last field, milliseconds. */
  totalMs: number;
}

export interface ClearanceFigures {
  type: 'figures';
  requestId: number;
  figures: PathFigures[];
}

export interface ClearanceFailure {
  type: 'failed';
  message: string;
}

export type ClearanceReply = KindReady | FieldsReady | ClearanceFigures | ClearanceFailure;
