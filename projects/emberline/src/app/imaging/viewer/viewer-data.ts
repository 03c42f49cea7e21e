import type { StructureKind, VolumeGeometry } from '@emberline/shared';

/** A series' voxels as the viewer holds them: plain arrays, LPS geometry. */
export interface ViewerVolume {
  geometry: VolumeGeometry;
  /** int16, index i + nx·(j + ny·k). */
  voxels: Int16Array;
  valueUnit: 'HU' | 'scanner-units';
  valueRange: { min: number; max: number };
}

/** The series' label map, on the same grid. */
export interface ViewerLabelMap {
  labels: Uint8Array | Uint16Array;
  labelValues: readonly number[];
}

/** How each label shows: colour (#rrggbb), whether it is on, and the overall opacity (0…1). */
export interface LabelAppearance {
  colours: ReadonlyMap<number, string>;
  visible: ReadonlySet<number>;
  opacity: number;
  /** Kinds of the labels, for the 3D view's see-through of enclosing organs. */
  kinds: ReadonlyMap<number, StructureKind | null>;
}

/** An applicator path to draw: LPS millimetres; the selected one stands out. */
export interface PathShape {
  /** Index of the applicator in the plan. */
  applicator: number;
  entryLps: readonly [number, number, number];
  targetLps: readonly [number, number, number];
  isSelected: boolean;
}

/** '#rrggbb' → [r, g, b] in 0…1. */
export function rgbOf(hex: string): [number, number, number] {
  const value = Number.parseInt(hex.replace('#', ''), 16);
  return [((value >> 16) & 255) / 255, ((value >> 8) & 255) / 255, (value & 255) / 255];
}
