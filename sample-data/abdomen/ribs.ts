/**
 * Ribs as curved bars: tubes along arcs of an ellipse inside the muscle of the body wall,
 * running from beside the spine round the flank towards the front and falling as they go, as
 * the lower ribs do. Both sides, mirrored in x. LPS, millimetres.
 */
import { BODY_OUTLINE, WALL_DEPTHS_MM } from './torso';
import type { Vec3 } from './vector';

export interface Rib {
  name: string;
  radiusMm: number;
  centreLineLps: Vec3[];
}

/** Radius of a rib's bar, millimetres: it fills the muscle layer of the wall. */
const RIB_RADIUS_MM = 2.5;

/** Depth of a rib's centre-line under the skin surface: mid-muscle. */
const RIB_DEPTH_MM = (WALL_DEPTHS_MM.muscle + WALL_DEPTHS_MM.cavity) / 2;

/** Segments a rib's arc is divided into. */
const SEGMENTS_PER_RIB = 24;

/**
 * Each rib pair: height of its posterior end, how far it falls towards its anterior end, and the
 * angle (radians, 0 at the patient's left, π/2 posterior, π at the right) the right rib
 * spans; the left rib mirrors it.
 */
const RIB_PAIRS = [
  { number: 7, posteriorZMm: 74, fallMm: 36, fromAngle: 0.6 * Math.PI, toAngle: 1.42 * Math.PI },
  { number: 8, posteriorZMm: 52, fallMm: 34, fromAngle: 0.6 * Math.PI, toAngle: 1.36 * Math.PI },
  { number: 9, posteriorZMm: 30, fallMm: 30, fromAngle: 0.6 * Math.PI, toAngle: 1.28 * Math.PI },
  { number: 10, posteriorZMm: 8, fallMm: 24, fromAngle: 0.6 * Math.PI, toAngle: 1.16 * Math.PI },
] as const;

export function ribs(): Rib[] {
  const semiAxisXMm = BODY_OUTLINE.semiAxisXMm - RIB_DEPTH_MM;
  const semiAxisYMm = BODY_OUTLINE.semiAxisYMm - RIB_DEPTH_MM;
  return RIB_PAIRS.flatMap((pair) =>
    (['right', 'left'] as const).map((side) => {
      const centreLineLps: Vec3[] = [];
      for (let step = 0; step <= SEGMENTS_PER_RIB; step++) {
        const fraction = step / SEGMENTS_PER_RIB;
        const angle = pair.fromAngle + (pair.toAngle - pair.fromAngle) * fraction;
        const rightX = BODY_OUTLINE.centreXMm + semiAxisXMm * Math.cos(angle);
        centreLineLps.push([
          toHundredths(side === 'right' ? rightX : -rightX),
          toHundredths(BODY_OUTLINE.centreYMm + semiAxisYMm * Math.sin(angle)),
          toHundredths(pair.posteriorZMm - pair.fallMm * fraction),
        ]);
      }
      return { name: `${side}-rib-${pair.number}`, radiusMm: RIB_RADIUS_MM, centreLineLps };
    }),
  );
}

/**
 * Rounds to 0.01 mm, so that the last bit of a sine or cosine, should an engine differ there,
 * cannot move a rib.
 */
function toHundredths(valueMm: number): number {
  return Math.round(valueMm * 100) / 100;
}
