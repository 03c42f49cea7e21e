import { zoneModelShortLabels, type ZoneModel } from '@emberline/shared';

/**
 * How each zone model shows, Emberline's own: told apart by line and surface pattern as well
 * as by colour — the table zone a solid outline and a tinted translucent skin in 3D, the
 * physics (bioheat) zone a dashed outline and in 3D a cage of rings 5 mm apart over a faint
 * skin, so that the tumour inside stays in sight. Both colours keep clear of the
 * anatomical ones (structure-kind-colours.ts) and of the ember orange of the paths.
 */
export interface ZoneStyle {
  /** As the toggles name it. */
  label: string;
  /** '#rrggbb'. */
  colour: string;
  /** SVG stroke-dasharray in CSS pixels, or null for a solid line. */
  dash: string | null;
  /** Opacity of the zone's surface in the 3D view, 0…1. */
  opacity: number;
  /** Rings of the outline drawn over the surface in 3D, this far apart (mm), or none. */
  ringStepMm: number | null;
  /** The pattern in words, for the toggles and screen readers. */
  pattern: string;
}

export const zoneStyles: Record<ZoneModel, ZoneStyle> = {
  table: {
    label: zoneModelShortLabels.table,
    colour: '#d6f25c',
    dash: null,
    opacity: 0.16,
    ringStepMm: null,
    pattern: 'solid outline; tinted skin in 3D',
  },
  bioheat: {
    label: zoneModelShortLabels.bioheat,
    colour: '#ff78d2',
    dash: '7 4',
    opacity: 0.1,
    ringStepMm: 5,
    pattern: 'dashed outline; ringed cage in 3D',
  },
};

/** The zone model in words inside a sentence ("against the physics zone"). */
export function zoneName(model: ZoneModel): string {
  return zoneStyles[model].label.toLowerCase();
}
