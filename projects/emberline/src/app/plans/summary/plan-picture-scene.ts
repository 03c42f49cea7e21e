import {
  zoneModels,
  type AssessmentDisplay,
  type PlanView,
  type ZoneModel,
} from '@emberline/shared';
import { zoneStyles } from '../../imaging/viewer/assessment/zone-styles';
import {
  edgeLetters,
  needlePlane,
  toPlane,
  type NeedlePlane,
  type PlanePoint,
} from './needle-plane';
import {
  scaleBarMm,
  squareWindow,
  surfaceOnPlane,
  zoneOutline,
  type PlaneWindow,
  type SurfaceMark,
} from './plane-outlines';

export interface PictureZone {
  model: ZoneModel;
  loops: PlanePoint[][];
  /** The zone the verdict's coverage figures use. */
  isPrimary: boolean;
}

export interface PictureNeedle {
  entry: PlanePoint;
  tip: PlanePoint;
  /** Applicator 1 lies in the plane; the others are drawn projected onto it. */
  isInPlane: boolean;
}

/** Everything a plan's picture draws, in picture millimetres (x rightwards, y downwards). */
export interface PlanPictureScene {
  plane: NeedlePlane;
  window: PlaneWindow;
  zones: PictureZone[];
  tumour: SurfaceMark[];
  needles: PictureNeedle[];
  letters: { top: string; right: string; bottom: string; left: string };
  scaleBarMm: number;
  /** What the picture shows, in words: its caption and its text for screen readers. */
  description: string;
}

/** Outlines are sampled this finely on the plane, mm, unless the voxels are finer. */
const largestStepMm = 0.5;
/** Room around the zones and the tumour, mm, and the narrowest picture, mm. */
const paddingMm = 6;
const minimumSpanMm = 40;

/**
 * The picture of an assessed plan: the plane through applicator 1's axis with the outlines of
 * the assessed zones, the tumour surface samples on it (from the margins measured against the
 * primary zone) and the needles. Null for a plan without applicators.
 */
export function planPictureScene(
  plan: Pick<PlanView, 'applicators'>,
  display: AssessmentDisplay,
  primaryModel: ZoneModel,
): PlanPictureScene | null {
  const first = plan.applicators[0];
  if (!first) return null;
  const plane = needlePlane(first.entry, first.target);
  const zones = zoneModels.flatMap((model) =>
    display.zones
      .filter((zone) => zone.model === model)
      .map((zone) => ({
        model,
        loops: zoneOutline(zone, plane, Math.min(largestStepMm, ...zone.geometry.spacingMm)),
        isPrimary: model === primaryModel,
      })),
  );
  const marginModel = display.margins.some((entry) => entry.model === primaryModel)
    ? primaryModel
    : display.margins[0]?.model;
  // Surface samples sit on voxel faces: a band half the coarsest voxel thick around the plane
  // catches a closed ring of them without doubling it.
  const coarsestMm = Math.max(1, ...display.zones.flatMap((zone) => zone.geometry.spacingMm));
  const tumour = display.margins
    .filter((entry) => entry.model === marginModel)
    .flatMap((entry) => surfaceOnPlane(entry, plane, coarsestMm / 2));
  const needles = plan.applicators.map((applicator, index) => ({
    entry: toPlane(plane, applicator.entry),
    tip: toPlane(plane, applicator.target),
    isInPlane: index === 0,
  }));
  const shown = [
    ...zones.flatMap((zone) => zone.loops.flat()),
    ...tumour,
    ...needles.map((needle) => needle.tip),
  ];
  const window = squareWindow(shown, paddingMm, minimumSpanMm);
  return {
    plane,
    window,
    zones,
    tumour,
    needles,
    letters: edgeLetters(plane),
    scaleBarMm: scaleBarMm(window.maxX - window.minX),
    description: describe(plane, zones, tumour, plan.applicators.length),
  };
}

function describe(
  plane: NeedlePlane,
  zones: readonly PictureZone[],
  tumour: readonly SurfaceMark[],
  applicatorCount: number,
): string {
  const tilt = Math.round(plane.tiltFromAxialDeg);
  const through = applicatorCount > 1 ? 'applicator 1’s axis' : 'the needle’s axis';
  const where = tilt === 0 ? 'the axial plane' : `a plane tilted ${tilt}° from axial`;
  const parts = zones
    .filter((zone) => zone.loops.length)
    .map(
      (zone) =>
        `${zoneStyles[zone.model].label.toLowerCase()} outlined ` +
        `(${zoneStyles[zone.model].dash ? 'dashed' : 'solid'}${zone.isPrimary ? ', used for the verdict' : ''})`,
    );
  const outside = tumour.filter((mark) => mark.marginMm < 0).length;
  parts.push(
    tumour.length
      ? `tumour surface dotted${outside ? `, ${outside} of its ${tumour.length} points outside the zone` : ''}`
      : 'no tumour surface on this plane',
  );
  if (applicatorCount > 1) parts.push('the other applicators projected, dashed');
  return `Slice through ${through}, on ${where}: ${parts.join('; ')}.`;
}
