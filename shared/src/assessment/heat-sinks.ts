/**
 * Heat-sink vessels beside an ablation zone: the parts of vessels of the safety profile's
 * heat-sink kinds whose local diameter (vessel-calibre.ts) reaches `heatSinkDiameterMm` and
 * whose wall lies within `heatSinkDistanceMm` of the zone's surface. Flowing blood in veins of
 * 3 mm and more cooled the zone in 73 % of cases, in none below (Lu DSK et al., AJR
 * 2002;178:47); "within about 10 mm of the zone" is a project default after Lu.
 *
 * Both figures carry their uncertainty, and a vessel that meets the rule only within it is
 * listed too, as possible (`isPossible`): the calibre band (the diameters of a round vessel
 * that could give the same reading on this grid), and the gap measured from the faces of the
 * vessel's voxels to the zone's surface (zone-surface.ts) with its lower bound — the wall up to
 * a voxel nearer, the zone's surface up to its model's boundary error farther out. One entry
 * per connected (26-neighbour) part of each kind: its largest diameter and band, its smallest
 * gap and bound. Crop grid, millimetres.
 */
import type { HeatSinkVessel } from '../api/assessments';
import type { StructureKind } from '../api/structures';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { kindCode } from './label-inventory';
import { calibreBandAt, type VesselCalibre } from './vessel-calibre';
import type { ZoneSurface } from './zone-surface';

export interface HeatSinkInput {
  cropGeometry: VolumeGeometry;
  /** Kind code of every crop voxel. */
  kindCodes: Uint8Array;
  /** The zone's surface; only vessel voxels where it can be read are considered. */
  zoneSurface: ZoneSurface;
  /** How far the zone model's surface may lie from where it is read, mm (≥ 0). */
  boundaryErrorMm: number;
  /** The calibre of each heat-sink kind present on the crop. */
  vessels: readonly { kind: StructureKind; calibre: VesselCalibre }[];
  heatSinkDiameterMm: number;
  heatSinkDistanceMm: number;
}

/** The heat-sink vessels, certain and possible, nearest first (then widest). */
export function findHeatSinks(input: HeatSinkInput): HeatSinkVessel[] {
  const found: HeatSinkVessel[] = [];
  for (const vessel of input.vessels) found.push(...heatSinksOfKind(input, vessel));
  return found.sort((a, b) => a.distanceMm - b.distanceMm || b.diameterMm - a.diameterMm);
}

function heatSinksOfKind(
  input: HeatSinkInput,
  vessel: { kind: StructureKind; calibre: VesselCalibre },
): HeatSinkVessel[] {
  const [nx, ny, nz] = input.cropGeometry.dimensions;
  const { calibre } = vessel;
  const thresholdMm = input.heatSinkDiameterMm;
  const code = kindCode(vessel.kind);
  const bands = new Map<number, ReturnType<typeof calibreBandAt>>();
  const bandOf = (voxel: number) => {
    const source = calibre.sourceOf[voxel] >= 0 ? calibre.sourceOf[voxel] : voxel;
    let band = bands.get(source);
    if (!band) {
      band = calibreBandAt(calibre, source);
      bands.set(source, band);
    }
    return band;
  };
  // Candidates: voxels whose diameter comes within the coarse reading's error (2h, at least
  // the width of any calibre band above the nominal) of the threshold, and whose wall may lie
  // within the distance. Their bands are read per part below, from its widest reading.
  const slackMm = 2 * calibre.halfDiagonalMm;
  // The candidates (crop indices), each one's slot, and per slot its gaps and whether it meets
  // the rule by its nominal figures.
  const candidates: number[] = [];
  const slotOf = new Map<number, number>();
  const gapsMm: number[] = [];
  const gapsLowerMm: number[] = [];
  const isNominal: boolean[] = [];
  // A voxel whose cell, widened by a voxel, may lie within the distance of the zone's surface
  // lies within that and a voxel diagonal and a half of it.
  const { spacingMm } = input.cropGeometry;
  const reachMm = input.heatSinkDistanceMm + 3 * Math.hypot(...spacingMm) + input.boundaryErrorMm;
  const { min: low, max: high } = input.zoneSurface.voxelsWithin(reachMm);
  for (let k = low[2]; k <= high[2]; k++) {
    for (let j = low[1]; j <= high[1]; j++) {
      for (let i = low[0]; i <= high[0]; i++) {
        const index = i + nx * (j + ny * k);
        if (input.kindCodes[index] !== code) continue;
        const diameterMm = calibre.diametersMm[index];
        if (!(diameterMm >= thresholdMm - slackMm)) continue;
        if (!input.zoneSurface.covers(i, j, k)) continue;
        // The gap from the voxel's cell, and from the cell widened by a voxel, to the zone.
        const highest = input.zoneSurface.highestOverCells(i, j, k);
        const gapLowerMm = Math.max(0, -highest.widenedCellMm - input.boundaryErrorMm);
        if (gapLowerMm > input.heatSinkDistanceMm) continue;
        const gapMm = Math.max(0, -highest.cellMm);
        slotOf.set(index, candidates.length);
        candidates.push(index);
        gapsMm.push(gapMm);
        gapsLowerMm.push(gapLowerMm);
        isNominal.push(diameterMm >= thresholdMm && gapMm <= input.heatSinkDistanceMm);
      }
    }
  }
  const seen = new Uint8Array(candidates.length);
  const parts: HeatSinkVessel[] = [];
  for (let first = 0; first < candidates.length; first++) {
    if (seen[first] !== 0) continue;
    const part: HeatSinkVessel = {
      kind: vessel.kind,
      diameterMm: 0,
      diameterLowerMm: 0,
      diameterUpperMm: 0,
      distanceMm: Infinity,
      distanceLowerMm: Infinity,
      isPossible: true,
    };
    const queue = [first];
    seen[first] = 1;
    let widest = candidates[first];
    const sources = new Set<number>();
    while (queue.length > 0) {
      const slot = queue.pop() as number;
      const at = candidates[slot];
      if (calibre.diametersMm[at] > calibre.diametersMm[widest]) widest = at;
      sources.add(calibre.sourceOf[at] >= 0 ? calibre.sourceOf[at] : at);
      part.diameterMm = Math.max(part.diameterMm, calibre.diametersMm[at]);
      part.distanceMm = Math.min(part.distanceMm, gapsMm[slot]);
      part.distanceLowerMm = Math.min(part.distanceLowerMm ?? Infinity, gapsLowerMm[slot]);
      if (isNominal[slot]) part.isPossible = false;
      const x = at % nx;
      const y = Math.floor(at / nx) % ny;
      const z = Math.floor(at / (nx * ny));
      for (let dz = -1; dz <= 1; dz++) {
        for (let dy = -1; dy <= 1; dy++) {
          for (let dx = -1; dx <= 1; dx++) {
            const xx = x + dx;
            const yy = y + dy;
            const zz = z + dz;
            if (xx < 0 || yy < 0 || zz < 0 || xx >= nx || yy >= ny || zz >= nz) continue;
            const next = slotOf.get(xx + nx * (yy + ny * zz));
            if (next === undefined || seen[next] !== 0) continue;
            seen[next] = 1;
            queue.push(next);
          }
        }
      }
    }
    // The part's band: that of its widest reading (the one that gives its nominal diameter);
    // for a possible heat sink, up to the highest upper end of all its readings, since any of
    // them reaching the threshold makes it one.
    const band = bandOf(widest);
    part.diameterLowerMm = Math.min(band.lowerMm, part.diameterMm);
    let upperMm = Math.max(band.upperMm, part.diameterMm);
    if (part.isPossible) {
      for (const source of sources) upperMm = Math.max(upperMm, bandOf(source).upperMm);
    }
    part.diameterUpperMm = upperMm;
    // Neither a heat sink by its nominal figures nor within their bands: not listed.
    if (part.isPossible && part.diameterUpperMm < thresholdMm) continue;
    parts.push(part);
  }
  return parts;
}
