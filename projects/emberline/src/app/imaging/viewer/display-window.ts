/**
 * The display window of the slice views: which voxel values span the grey ramp from black to
 * white. Centre (the "level") and width are in the series' value unit (HU for CT).
 */
export interface DisplayWindow {
  centre: number;
  width: number;
}

export type WindowPresetId = 'abdomen' | 'liver' | 'lung' | 'bone';

export interface WindowPreset {
  id: WindowPresetId;
  label: string;
  window: DisplayWindow;
}

/**
 * CT windows in Hounsfield units, as radiology departments commonly set them (common practice,
 * values from memory; sites differ by some tens of HU): soft-tissue abdomen W 400 / L 50, liver
 * W 150 / L 30, lung W 1500 / L −600, bone W 1800 / L 400. They mean nothing for MR.
 */
export const windowPresets: readonly WindowPreset[] = [
  { id: 'abdomen', label: 'Abdomen', window: { centre: 50, width: 400 } },
  { id: 'liver', label: 'Liver', window: { centre: 30, width: 150 } },
  { id: 'lung', label: 'Lung', window: { centre: -600, width: 1500 } },
  { id: 'bone', label: 'Bone', window: { centre: 400, width: 1800 } },
];

/** Narrowest window the controls allow, in the value unit. */
export const minimumWindowWidth = 1;

/** The values at the black and the white end of the ramp. */
export function windowBounds(window: DisplayWindow): { lowest: number; highest: number } {
  return { lowest: window.centre - window.width / 2, highest: window.centre + window.width / 2 };
}

/**
 * Grey level (0 black … 1 white) of a value: the straight ramp between the window's bounds,
 * clamped outside it — the rendering's own mapping (vtk.js colour window and level).
 */
export function greyLevel(value: number, window: DisplayWindow): number {
  const { lowest } = windowBounds(window);
  return Math.min(1, Math.max(0, (value - lowest) / window.width));
}

/** The preset a window equals, if any. */
export function presetOf(window: DisplayWindow): WindowPresetId | null {
  const preset = windowPresets.find(
    (candidate) =>
      candidate.window.centre === window.centre && candidate.window.width === window.width,
  );
  return preset?.id ?? null;
}

/**
 * The window after a drag on a slice view (right button): right widens, up raises the level.
 * One pixel moves either by `unitsPerPixel` (default: a 400th of the value range, so that a
 * drag across a view sweeps a good part of it). The width never falls below
 * `minimumWindowWidth`.
 */
export function draggedWindow(
  window: DisplayWindow,
  deltaXPx: number,
  deltaYPx: number,
  valueRange: { min: number; max: number },
  unitsPerPixel = Math.max(1, (valueRange.max - valueRange.min) / 400),
): DisplayWindow {
  return {
    centre: Math.round(window.centre - deltaYPx * unitsPerPixel),
    width: Math.max(minimumWindowWidth, Math.round(window.width + deltaXPx * unitsPerPixel)),
  };
}
