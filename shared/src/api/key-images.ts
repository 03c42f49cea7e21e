import { z } from 'zod';
import { zoneModels } from './assessments';
import { lpsPointSchema } from './plans';

/**
 * Key images: a picture of one pane of the viewer as it stood (the slice or the 3D view with
 * its overlays), kept on the case with the view state that made it, listed in the Discussion
 * section and printed in the board summary.
 */

/** The viewer's panes, by the names the viewer gives them. */
export const keyImagePanes = ['axial', 'coronal', 'sagittal', '3d'] as const;
export type KeyImagePane = (typeof keyImagePanes)[number];

export const keyImagePaneLabels: Record<KeyImagePane, string> = {
  axial: 'Axial',
  coronal: 'Coronal',
  sagittal: 'Sagittal',
  '3d': '3D',
};

/** Limits of the picture (checked on the PNG's IHDR and its byte length by the server). */
export const keyImageLimits = {
  maxSidePx: 4096,
  maxBytes: 8 * 1024 * 1024,
  maxCaptionLength: 200,
  /** Label values a label map may hold (16-bit), and how many may be listed as hidden. */
  maxLabelValue: 65_535,
  maxHiddenLabels: 256,
} as const;

/**
 * What the viewer showed when the picture was taken, enough to put the view back: the crosshair
 * (each slice view shows the slice through it), the slice index of the pane, the display window,
 * the 3D camera, the structure labels hidden and their opacity, the plan open and the zones
 * shown. Every size is bounded.
 */
export const keyImageViewStateSchema = z.strictObject({
  /** The crosshair in patient LPS mm: the three slice views show the slices through it. */
  cursorLps: lpsPointSchema,
  /** The slice of the pane, counted from 0 along its voxel axis; null for the 3D view. */
  sliceIndex: z.number().int().min(0).max(keyImageLimits.maxSidePx).nullable(),
  window: z.strictObject({
    width: z.number().finite().positive().max(100_000),
    level: z.number().finite().min(-100_000).max(100_000),
  }),
  /** The 3D camera as it stood (LPS mm), or null when the 3D view was never turned. */
  camera: z
    .strictObject({
      position: lpsPointSchema,
      focalPoint: lpsPointSchema,
      viewUp: lpsPointSchema,
    })
    .nullable(),
  /** Label values of the label map hidden at the time. */
  hiddenLabels: z
    .array(z.number().int().min(0).max(keyImageLimits.maxLabelValue))
    .max(keyImageLimits.maxHiddenLabels),
  /** Opacity of the structures over the slices, 0 to 1. */
  labelOpacity: z.number().min(0).max(1),
  /** The needle plan on screen, if any. */
  planId: z.uuid().nullable(),
  /** The assessed zones shown. */
  zones: z.array(z.enum(zoneModels)).max(zoneModels.length),
});
export type KeyImageViewState = z.infer<typeof keyImageViewStateSchema>;

/**
 * The `meta` field of POST /api/cases/:id/key-images (multipart; the picture is the `image`
 * field, a PNG).
 */
export const createKeyImageSchema = z.strictObject({
  seriesId: z.uuid(),
  pane: z.enum(keyImagePanes),
  caption: z
    .string()
    .trim()
    .max(
      keyImageLimits.maxCaptionLength,
      `A caption holds at most ${keyImageLimits.maxCaptionLength} characters`,
    )
    .optional(),
  viewState: keyImageViewStateSchema,
});
export type CreateKeyImage = z.infer<typeof createKeyImageSchema>;

export interface KeyImageView {
  id: string;
  caseId: string;
  seriesId: string;
  pane: KeyImagePane;
  caption: string | null;
  viewState: KeyImageViewState;
  widthPx: number;
  heightPx: number;
  bytes: number;
  author: { id: string; displayName: string };
  createdAt: string;
  /** GET this for the PNG. */
  imageUrl: string;
  /** Whether the reader may remove it: its author, until the case is decided. */
  canDelete: boolean;
}
