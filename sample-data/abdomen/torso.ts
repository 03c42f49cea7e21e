/**
 * The invented torso: an elliptic body outline constant along z, layered skin, subcutaneous fat
 * and muscle around the cavity, and a two-domed diaphragm. LPS, millimetres.
 *
 * The whole outline fits the 153.6 × 128 mm field, so the body is smaller than an adult's
 * (about 144 × 116 mm across); organs keep adult-like sizes for tumours and vessels, so the
 * proportions are only roughly anatomical. The scenario is invented for exercising the product.
 */
import { ellipticCylinder, type Solid } from './solids';

/** Centre and semi-axes of the body outline (the skin surface), millimetres. */
export const BODY_OUTLINE = { centreXMm: 0, centreYMm: 2, semiAxisXMm: 72, semiAxisYMm: 58 };

/** Depths under the skin surface, millimetres: skin, then fat, then muscle, then the cavity. */
export const WALL_DEPTHS_MM = { fat: 2, muscle: 8, cavity: 12 } as const;

/** Far beyond the grid along z: the torso has no top or bottom within the scan. */
export const Z_EXTENT_MM = 1000;

/** The body outline shrunk by `depthMm` on each semi-axis, along the whole scan. */
export function bodyCrossSection(depthMm: number): Solid {
  return ellipticCylinder(
    BODY_OUTLINE.centreXMm,
    BODY_OUTLINE.centreYMm,
    BODY_OUTLINE.semiAxisXMm - depthMm,
    BODY_OUTLINE.semiAxisYMm - depthMm,
    -Z_EXTENT_MM,
    Z_EXTENT_MM,
  );
}

/** Thickness of the diaphragm's muscle, millimetres. */
export const DIAPHRAGM_THICKNESS_MM = 4;

/** Domes of the diaphragm: apex (LPS, millimetres); the right dome stands higher. */
const DIAPHRAGM_DOMES = [
  { apexXMm: -26, apexYMm: 0, apexZMm: 54 },
  { apexXMm: 26, apexYMm: 2, apexZMm: 47 },
] as const;

/** How fast a dome falls away from its apex, millimetres of z per square millimetre. */
const DOME_FALL_PER_SQUARE_MM = 0.022;

/** Extra fall behind y = 5 mm, which deepens the posterior recesses of the lungs. */
const POSTERIOR_FALL_PER_SQUARE_MM = 0.008;

/**
 * Height (z, millimetres) of the diaphragm's upper surface above the point (x, y): the higher of
 * two paraboloid domes. Lung lies above it, its muscle just below, the abdomen further down.
 */
export function diaphragmTopZMm(xMm: number, yMm: number): number {
  const posteriorMm = Math.max(0, yMm - 5);
  let topMm = -Infinity;
  for (const dome of DIAPHRAGM_DOMES) {
    const radialSquared = (xMm - dome.apexXMm) ** 2 + (yMm - dome.apexYMm) ** 2;
    topMm = Math.max(
      topMm,
      dome.apexZMm -
        DOME_FALL_PER_SQUARE_MM * radialSquared -
        POSTERIOR_FALL_PER_SQUARE_MM * posteriorMm ** 2,
    );
  }
  return topMm;
}
