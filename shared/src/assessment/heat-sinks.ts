/**
 * Heat-sink vessels beside an ablation zone: the parts of vessels of the
 * safety profile's heat-sink kinds whose local diameter (vessel-calibre.ts) reaches
 * `heatSinkDiameterMm` and whose wall lies within `heatSinkDistanceMm` of the zone's surface.
 * Flowing blood in veins of 3 mm and more cooled the zone in 73 % of cases, in none below
 * (Lu DSK et al., AJR 2002;178:47); "within about 10 mm of the zone" is a project default
 * after Lu. One entry per connected (26-neighbour) part of each kind: its largest local
 * diameter and its smallest wall-to-zone gap (zone-field.ts `gapToZoneAt`). Crop grid, mm.
 */
import type { HeatSinkVessel } from '../api/assessments';
import type { StructureKind } from '../api/structures';
import type { VolumeGeometry } from '../geometry/patient-geometry';
import { kindCode } from './label-inventory';
import { gapToZoneAt, type ZoneField } from './zone-field';

export interface HeatSinkInput {
  cropGeometry: VolumeGeometry;
  /** Kind code of every crop voxel. */
  kindCodes: Uint8Array;
  /** The zone's signed field; only vessels within its box are considered. */
  zoneField: ZoneField;
  /** Local diameters (mm, NaN off the vessel) on the crop, for each heat-sink kind present. */
  vessels: readonly { kind: StructureKind; diametersMm: Float32Array }[];
  heatSinkDiameterMm: number;
  heatSinkDistanceMm: number;
}

/** The heat-sink vessels, nearest first (then widest). */
export function findHeatSinks(input: HeatSinkInput): HeatSinkVessel[] {
  const found: HeatSinkVessel[] = [];
  for (const vessel of input.vessels) found.push(...heatSinksOfKind(input, vessel));
  return found.sort((a, b) => a.distanceMm - b.distanceMm || b.diameterMm - a.diameterMm);
}

function heatSinksOfKind(
  input: HeatSinkInput,
  vessel: { kind: StructureKind; diametersMm: Float32Array },
): HeatSinkVessel[] {
  const [nx, ny] = input.cropGeometry.dimensions;
  const { box } = input.zoneField;
  const [bx, by, bz] = box.size;
  const [x0, y0, z0] = box.start;
  const code = kindCode(vessel.kind);
  // Gap to the zone of each qualifying voxel of the box, NaN for the others.
  const gapsMm = new Float32Array(bx * by * bz).fill(NaN);
  for (let z = 0; z < bz; z++) {
    for (let y = 0; y < by; y++) {
      for (let x = 0; x < bx; x++) {
        const crop = x0 + x + nx * (y0 + y + ny * (z0 + z));
        if (input.kindCodes[crop] !== code) continue;
        if (!(vessel.diametersMm[crop] >= input.heatSinkDiameterMm)) continue;
        const gapMm = gapToZoneAt(input.zoneField, x0 + x, y0 + y, z0 + z);
        if (gapMm <= input.heatSinkDistanceMm) gapsMm[x + bx * (y + by * z)] = gapMm;
      }
    }
  }
  const seen = new Uint8Array(gapsMm.length);
  const parts: HeatSinkVessel[] = [];
  const queue = new Int32Array(gapsMm.length);
  for (let start = 0; start < gapsMm.length; start++) {
    if (seen[start] !== 0 || Number.isNaN(gapsMm[start])) continue;
    let diameterMm = 0;
    let distanceMm = Infinity;
    let head = 0;
    let tail = 0;
    queue[tail++] = start;
    seen[start] = 1;
    while (head < tail) {
      const at = queue[head++];
      const x = at % bx;
      const y = Math.floor(at / bx) % by;
      const z = Math.floor(at / (bx * by));
      const crop = x0 + x + nx * (y0 + y + ny * (z0 + z));
      diameterMm = Math.max(diameterMm, vessel.diametersMm[crop]);
      distanceMm = Math.min(distanceMm, gapsMm[at]);
      for (let dz = -1; dz <= 1; dz++) {
        for (let dy = -1; dy <= 1; dy++) {
          for (let dx = -1; dx <= 1; dx++) {
            const xx = x + dx;
            const yy = y + dy;
            const zz = z + dz;
            if (xx < 0 || yy < 0 || zz < 0 || xx >= bx || yy >= by || zz >= bz) continue;
            const next = xx + bx * (yy + by * zz);
            if (seen[next] !== 0 || Number.isNaN(gapsMm[next])) continue;
            seen[next] = 1;
            queue[tail++] = next;
          }
        }
      }
    }
    parts.push({ kind: vessel.kind, diameterMm, distanceMm });
  }
  return parts;
}
