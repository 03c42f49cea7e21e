/**
 * Geometry with its uncertainty, on analytic phantoms at 0.5, 2.5 and 5 mm slices (0.78 mm
 * pixels): each figure read from a label map must lie within half a voxel of the shape's true
 * value along the direction it is measured in, its conservative bound must never claim more
 * than the truth, and the verdict must caution wherever the rule's threshold lies between the
 * two. The truths are the shapes' own geometry, stated beside each check.
 */
import { describe, expect, it } from 'vitest';
import { euclideanDistanceTransform } from '../geometry/distance-transform';
import { halfVoxelDiagonalMm } from '../geometry/path-clearance';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { normalize, type Vec3 } from '../geometry/vector';
import { assessCoverage } from './coverage';
import { rasteriseEllipsoids, tableZoneEllipsoid, type EllipsoidZone } from './ellipsoid-zone';
import { findHeatSinks } from './heat-sinks';
import { kindCode } from './label-inventory';
import {
  axialGrid,
  ball,
  cylinder,
  emptyLabels,
  IN_PLANE_MM,
  paint,
  phantomSafetyProfile,
  phantomTrajectory,
  phantomVerdictFigures,
  SLICE_THICKNESSES_MM,
} from './testing/phantoms';
import { judgePlan, verdictRules } from './verdict';
import { calibreBandAt, vesselCalibre } from './vessel-calibre';
import { maskExtent } from './zone-field';
import { ellipsoidZoneSurface } from './zone-surface';

/** A spherical table zone of radius R about a centre (a spheroid with equal semi-axes). */
function sphericalZone(centre: Vec3, radiusMm: number): EllipsoidZone {
  return tableZoneEllipsoid([centre[0] - 60, centre[1], centre[2]], centre, {
    zoneLengthMm: 2 * radiusMm,
    zoneWidthMm: 2 * radiusMm,
    tipOffsetMm: 0,
  });
}

function coverageOn(
  geometry: VolumeGeometry,
  labels: Uint8Array,
  zone: EllipsoidZone,
  marginTargetMm: number,
) {
  const extent = maskExtent(
    Uint8Array.from(labels, (value) => (value === 2 ? 1 : 0)),
    geometry.dimensions,
  );
  if (!extent) throw new Error('empty tumour');
  return assessCoverage({
    model: 'table',
    cropGeometry: geometry,
    cropLabels: labels,
    kindCodes: Uint8Array.from(labels, (value) => (value === 2 ? kindCode('tumour') : 0)),
    zoneMask: rasteriseEllipsoids([zone], geometry),
    zoneSurface: ellipsoidZoneSurface([zone], geometry),
    boundaryErrorMm: 0,
    tumours: [{ structureId: 'phantom', labelValue: 2, extent }],
    marginTargetMm,
  });
}

describe('clearance beside a vessel parallel to the path', () => {
  // The path runs along x at y = z = 0; a vessel of radius 4 mm runs along x above it with its
  // axis at z = 12 mm: its surface lies 8.0 mm from the path (distance between parallel lines
  // less the radius), approached along z. A slice centre lies 0.1 mm outside the surface (the
  // labels start a whole slice farther up) or 0.1 mm inside it.
  const truthMm = 8;
  const cases = SLICE_THICKNESSES_MM.flatMap((sliceMm) =>
    [-0.1, 0.1].map((offsetMm) => ({ sliceMm, offsetMm })),
  );
  it.each(cases)(
    'at $sliceMm mm slices, a slice centre $offsetMm mm from the surface: within half a slice',
    ({ sliceMm, offsetMm }) => {
      const geometry = axialGrid(sliceMm, [-35, -12, -4], [35, 12, 20], [0, 0, truthMm + offsetMm]);
      const labels = paint(emptyLabels(geometry), geometry, 4, cylinder([0, 0, 12], [1, 0, 0], 4));
      const rule = (minimumClearanceMm: number) =>
        phantomSafetyProfile({
          clearances: [{ kind: 'portal-vein', minimumClearanceMm, isCritical: false }],
        });
      const figures = phantomTrajectory(
        geometry,
        labels,
        [{ id: 'vessel', labelValue: 4, kind: 'portal-vein' }],
        [-30, 0, 0],
        [30, 0, 0],
        rule(10),
      );
      const clearance = figures.safety.clearances.find((entry) => entry.kind === 'portal-vein');
      if (clearance?.lowerBoundMm === undefined) throw new Error('no clearance bound');
      // Nominal: the labelled voxels' faces lie within half a voxel of the surface along z.
      expect(Math.abs(clearance.minDistanceMm - truthMm)).toBeLessThanOrEqual(sliceMm / 2);
      // Bound: the cells widened by a slice along z hold the true surface: never above it.
      expect(clearance.lowerBoundMm).toBeLessThanOrEqual(truthMm);
      expect(clearance.lowerBoundMm).toBeCloseTo(Math.max(0, clearance.minDistanceMm - sliceMm), 9);
      // A 10 mm rule, which the true 8 mm breaks: never silent, whatever the slices read.
      const strict = judgePlan(phantomVerdictFigures({ clearances: [clearance] }), rule(10));
      const reasons = strict.reasons.filter((reason) => reason.rule === verdictRules.clearance);
      expect(reasons).toHaveLength(1);
      expect(reasons[0].bound).toBeCloseTo(clearance.lowerBoundMm, 9);
      if (clearance.minDistanceMm >= 10) {
        // The review's case: 8.0 mm read 10.4 mm at 5 mm slices passes by its nominal value.
        expect(reasons[0].message).toContain('cannot be confirmed at this slice thickness');
        expect(reasons[0].message).toContain(`${clearance.minDistanceMm.toFixed(1)} mm`);
        expect(reasons[0].message).toContain(`${clearance.lowerBoundMm.toFixed(1)} mm`);
        expect(reasons[0].message).toContain('10.0 mm');
      }
      // A 5 mm rule, which the true 8 mm meets: a caution exactly where 5 mm lies in the band.
      const loose = judgePlan(phantomVerdictFigures({ clearances: [clearance] }), rule(5));
      const isInBand = clearance.lowerBoundMm < 5 && clearance.minDistanceMm >= 5;
      expect(loose.reasons.some((reason) => reason.rule === verdictRules.clearance)).toBe(
        isInBand || clearance.minDistanceMm < 5,
      );
    },
  );
});

describe('minimal margin of a sphere concentric with a spherical zone', () => {
  // Tumour r = 10 mm inside a zone sphere R = 16 mm about the same centre: every point of the
  // tumour surface lies R − r = 6.0 mm inside the zone. A slice centre lies 0.05 mm inside the
  // tumour's top, so that the top slice's faces reach a nearly whole half slice beyond it.
  const [r, R] = [10, 16];
  const truthMm = R - r;
  it.each(SLICE_THICKNESSES_MM.map((sliceMm) => ({ sliceMm })))(
    'at $sliceMm mm slices: within half a voxel, the bound never above R − r',
    ({ sliceMm }) => {
      const centre: Vec3 = [0.21, -0.13, 0];
      const geometry = axialGrid(sliceMm, [-20, -20, -20], [20, 20, 20], [0, 0, r - 0.05]);
      const labels = paint(emptyLabels(geometry), geometry, 2, ball(centre, r));
      const [tumour] = coverageOn(geometry, labels, sphericalZone(centre, R), 5).zone.tumours;
      const lowerMm = tumour.minimalMarginLowerMm ?? NaN;
      // Each face is read at its centre, which lies within half a spacing along its own axis
      // of where the true surface crosses between its voxel's centre and the next (labelled by
      // centres); the margin is the same all round the true surface and changes by at most
      // 1 mm per mm, so the smallest reading is within half the largest spacing of R − r. The
      // table zone is read exactly.
      const halfVoxelMm = Math.max(...geometry.spacingMm) / 2;
      expect(Math.abs(tumour.minimalMarginMm - truthMm)).toBeLessThanOrEqual(halfVoxelMm);
      expect(lowerMm).toBeLessThanOrEqual(truthMm);
      for (const targetMm of [5, 6.5]) {
        const verdict = judgePlan(
          phantomVerdictFigures({
            zone: {
              model: 'table',
              boundaryErrorMm: 0,
              volumeMl: 17,
              tumours: [tumour],
              collateral: [],
            },
          }),
          phantomSafetyProfile({ marginTargetMm: targetMm }),
        );
        const reason = verdict.reasons.find((entry) => entry.rule === verdictRules.marginTarget);
        // A caution wherever the target lies above the bound (nominal under it, or within the
        // band); a 6.5 mm target, which the true 6.0 mm misses, always gets one.
        expect(reason !== undefined).toBe(lowerMm < targetMm);
        if (targetMm > truthMm) expect(reason).toBeDefined();
        if (reason && tumour.minimalMarginMm >= targetMm) {
          expect(reason.message).toContain('cannot be confirmed at this slice thickness');
          expect(reason.bound).toBeCloseTo(lowerMm, 9);
        }
      }
    },
  );
});

describe('surface below the margin target, by area', () => {
  // A box tumour with faces on cell boundaries, 19.5 × 19.5 mm (25 pixels) by 20 mm, under a
  // zone whose surface is the plane z = 12 mm (a sphere of 10 m radius, flat to 0.01 mm over
  // the box): the local margin at a point is 12 − z. With a 5 mm target the top (2 mm from the
  // zone surface) and a 3 mm band of the sides lie under it: by area
  // (L² + 4L·3) / (2L² + 4L·20) = 26.47 % (elementary geometry). Each face's margin is read at
  // its centre, so a side band is counted by whole slices: slices whose centre lies within
  // 3 mm of the top, giving (L² + 4L·h) / (2L² + 4L·20) with h the thickness they cover.
  const side = 25 * IN_PLANE_MM;
  it.each(SLICE_THICKNESSES_MM.map((sliceMm) => ({ sliceMm })))(
    'at $sliceMm mm slices it is the area share of the faces under the target',
    ({ sliceMm }) => {
      const geometry = axialGrid(sliceMm, [-14, -14, -14], [14, 14, 14], [0, 0, 10 - sliceMm / 2]);
      const half = side / 2;
      const labels = paint(
        emptyLabels(geometry),
        geometry,
        2,
        (p) => Math.abs(p[0]) < half && Math.abs(p[1]) < half && Math.abs(p[2]) < 10,
      );
      const plane = tableZoneEllipsoid([0, 0, 12 - 1e4 - 60], [0, 0, 12 - 1e4], {
        zoneLengthMm: 2e4,
        zoneWidthMm: 2e4,
        tipOffsetMm: 0,
      });
      const [tumour] = coverageOn(geometry, labels, plane, 5).zone.tumours;
      const share = (bandMm: number) =>
        (100 * (side * side + 4 * side * bandMm)) / (2 * side * side + 4 * side * 20);
      const slicesInBand = Math.floor((3 - sliceMm / 2) / sliceMm + 1e-9) + 1;
      expect(tumour.surfaceBelowTargetPercent).toBeCloseTo(share(slicesInBand * sliceMm), 6);
      // Within the reading error of a local margin (half a slice along z) of the true 26.47 %.
      expect(tumour.surfaceBelowTargetPercent).toBeGreaterThanOrEqual(share(3 - sliceMm / 2));
      expect(tumour.surfaceBelowTargetPercent).toBeLessThanOrEqual(share(3 + sliceMm / 2));
    },
  );

  it('is the area of a spherical cap on an offset sphere, within the reading error', () => {
    // Tumour r = 10 mm, zone sphere R = 16 mm whose centre lies d = 3 mm away along (1, 0, 1):
    // a surface point at angle θ from the offset lies √(d² + r² + 2dr·cos θ) from the zone
    // centre, under the target T where that exceeds R − T, i.e. cos θ > κ(T) =
    // ((R − T)² − d² − r²) / 2dr; the cap holds (1 − κ)/2 of the sphere's area (Archimedes).
    const [r, R, d] = [10, 16, 3];
    const capPercent = (targetMm: number) => {
      const kappa = ((R - targetMm) ** 2 - d * d - r * r) / (2 * d * r);
      return 100 * Math.min(1, Math.max(0, (1 - kappa) / 2));
    };
    const centre: Vec3 = [0.21, -0.13, 0.07];
    const away = normalize([1, 0, 1]);
    const zoneCentre: Vec3 = [centre[0] - d * away[0], centre[1], centre[2] - d * away[2]];
    const geometry = axialGrid(0.5, [-14, -14, -14], [14, 14, 14]);
    const labels = paint(emptyLabels(geometry), geometry, 2, ball(centre, r));
    const [tumour] = coverageOn(geometry, labels, sphericalZone(zoneCentre, R), 5).zone.tumours;
    expect(capPercent(5)).toBeCloseTo(40, 9);
    // Each face's margin is read within half a voxel (at most half its diagonal) of the
    // surface point it stands for; the faces' area weights vary slowly over a sphere, so the
    // share lies between the cap shares at T ∓ that error.
    const errorMm = halfVoxelDiagonalMm(geometry.spacingMm);
    expect(tumour.surfaceBelowTargetPercent).toBeGreaterThanOrEqual(capPercent(5 - errorMm));
    expect(tumour.surfaceBelowTargetPercent).toBeLessThanOrEqual(capPercent(5 + errorMm));
  });
});

describe('vessel calibre at the 3 mm heat-sink threshold', () => {
  // A round vessel 3.0 or 2.4 mm wide (Lu DSK et al., AJR 2002;178:47: heat sinks from 3 mm),
  // running across the slices (along z) or at 45° to them (in the y–z plane), its wall 4.0 mm
  // from a zone sphere of R = 12 mm (the axis 12 + 4 + d/2 mm from the centre, along x).
  const cases = (['across the slices', 'at 45° to the slices'] as const).flatMap((course) =>
    SLICE_THICKNESSES_MM.flatMap((sliceMm) =>
      [3.0, 2.4].map((diameterMm) => ({ course, sliceMm, diameterMm })),
    ),
  );
  it.each(cases)(
    '$diameterMm mm $course at $sliceMm mm slices',
    ({ course, sliceMm, diameterMm }) => {
      const axis: Vec3 = course === 'across the slices' ? [0, 0, 1] : normalize([0, 1, 1]);
      const through: Vec3 = [12 + 4 + diameterMm / 2 + 0.17, 0.29, 0];
      const geometry = axialGrid(sliceMm, [-14, -24, -24], [30, 24, 24], [0, 0, 0.11]);
      const mask = paint(
        emptyLabels(geometry),
        geometry,
        1,
        cylinder(through, axis, diameterMm / 2),
      );
      const inside = euclideanDistanceTransform(
        Uint8Array.from(mask, (value) => 1 - value),
        geometry.dimensions,
        geometry.spacingMm,
      );
      const h = halfVoxelDiagonalMm(geometry.spacingMm);
      const calibre = vesselCalibre(
        mask,
        inside,
        geometry.dimensions,
        geometry.spacingMm,
        3 + 4 * h,
      );
      const zoneSurface = ellipsoidZoneSurface([sphericalZone([0, 0, 0], 12)], geometry);
      const vessels = findHeatSinks({
        cropGeometry: geometry,
        kindCodes: Uint8Array.from(mask, (value) => (value ? kindCode('portal-vein') : 0)),
        zoneSurface,
        boundaryErrorMm: 0,
        vessels: [{ kind: 'portal-vein', calibre }],
        heatSinkDiameterMm: 3,
        heatSinkDistanceMm: 10,
      });
      // Half a voxel across the vessel: in-plane for one across the slices; at 45° the
      // section's widest voxel extent is along (0, 1, −1)/√2, (0.78 + s)/√2.
      const halfVoxelMm =
        course === 'across the slices'
          ? IN_PLANE_MM / 2
          : (IN_PLANE_MM + sliceMm) / (2 * Math.SQRT2);
      for (const vessel of vessels) {
        const lowerMm = vessel.diameterLowerMm ?? NaN;
        const upperMm = vessel.diameterUpperMm ?? NaN;
        expect(Math.abs(vessel.diameterMm - diameterMm)).toBeLessThanOrEqual(halfVoxelMm);
        expect(lowerMm).toBeLessThanOrEqual(diameterMm);
        expect(upperMm).toBeGreaterThanOrEqual(diameterMm);
        // A caution for every vessel listed: certain, or possible where 3 mm lies in its band.
        const verdict = judgePlan(
          phantomVerdictFigures({ heatSinks: [vessel] }),
          phantomSafetyProfile({}),
        );
        const reason = verdict.reasons.find((entry) => entry.rule === verdictRules.heatSink);
        expect(reason?.severity).toBe('caution');
        if (vessel.diameterMm < 3) {
          expect(vessel.isPossible).toBe(true);
          expect(upperMm).toBeGreaterThanOrEqual(3);
          expect(reason?.message).toContain('calibre cannot be confirmed');
        }
      }
      const nearest = vessels.reduce<(typeof vessels)[number] | null>(
        (best, vessel) => (best === null || vessel.distanceMm < best.distanceMm ? vessel : best),
        null,
      );
      if (diameterMm >= 3) {
        // The 3.0 mm vessel is never missed: listed, certain or possible, beside the zone. Its
        // wall faces the zone along x: the nearest part's faces lie within half a pixel of
        // 4.0 mm, and its bound never above it (parts farther along lie farther out).
        expect(nearest).not.toBeNull();
        expect(Math.abs((nearest?.distanceMm ?? NaN) - 4)).toBeLessThanOrEqual(IN_PLANE_MM / 2);
        expect(nearest?.distanceLowerMm).toBeLessThanOrEqual(4);
      } else {
        // The 2.4 mm vessel is never called a heat sink by its nominal calibre; left out
        // altogether only where no reading beside the zone (its cell widened by a voxel within
        // the 10 mm heat-sink distance) has a band reaching 3 mm.
        expect(vessels.every((vessel) => vessel.isPossible)).toBe(true);
        expect(vessels.every((vessel) => vessel.diameterMm < 3)).toBe(true);
        if (vessels.length === 0) {
          const [nx, ny] = geometry.dimensions;
          const besideZone = [...calibre.sections.keys()].filter((centre) => {
            const highest = zoneSurface.highestOverCells(
              centre % nx,
              Math.floor(centre / nx) % ny,
              Math.floor(centre / (nx * ny)),
            );
            return -highest.widenedCellMm <= 10;
          });
          expect(besideZone.length).toBeGreaterThan(0);
          for (const centre of besideZone) {
            expect(calibreBandAt(calibre, centre).upperMm).toBeLessThan(3);
          }
        }
      }
    },
  );
});
