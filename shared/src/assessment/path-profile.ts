/**
 * What an applicator path runs through: the structure kind at each sample from entry to tip
 * (every ≤ 0.5 mm, `pathSampling`), read from the series' label map at the nearest voxel. A
 * change of kind is placed midway between two samples, as `lengthInsideMask` does, so each
 * length is within half a step of the voxelised structure's at each boundary crossed.
 * Positions LPS, millimetres.
 */
import type { StructureKind } from '../api/structures';
import { pathSampling, type PathSampling } from '../geometry/path-clearance';
import { lpsToVoxel, type VolumeGeometry } from '../geometry/patient-geometry';
import type { Vec3 } from '../geometry/vector';
import { kindCode } from './label-inventory';

/** Kind code of a sample beyond the series grid. */
export const OUTSIDE_SERIES_CODE = 255;

export interface PathProfile {
  sampling: PathSampling;
  /** Kind code (label-inventory.ts) at each sample; 0 unlabelled, `OUTSIDE_SERIES_CODE` off grid. */
  codes: Uint8Array;
  /** Samples beyond the series grid, where nothing is known. */
  samplesOutsideSeries: number;
}

/**
 * Kinds a path may run through inside the liver: a run of them with liver or
 * tumour on both sides lies within the liver, not outside it.
 */
const INTRAHEPATIC_KINDS: readonly StructureKind[] = [
  'portal-vein',
  'hepatic-vein',
  'hepatic-artery',
  'bile-duct',
];

/** The kinds along the path from entry to tip (LPS, millimetres). */
export function pathProfile(
  labelMap: Uint8Array | Uint16Array,
  geometry: VolumeGeometry,
  kindCodeOfLabel: Uint8Array,
  entryLps: Readonly<Vec3>,
  tipLps: Readonly<Vec3>,
): PathProfile {
  const sampling = pathSampling(entryLps, tipLps);
  const [nx, ny, nz] = geometry.dimensions;
  const from = lpsToVoxel(geometry, entryLps);
  const to = lpsToVoxel(geometry, tipLps);
  const codes = new Uint8Array(sampling.sampleCount);
  const last = sampling.sampleCount - 1;
  let samplesOutsideSeries = 0;
  for (let sample = 0; sample <= last; sample++) {
    const fraction = last === 0 ? 0 : sample / last;
    const i = Math.round(from[0] + (to[0] - from[0]) * fraction);
    const j = Math.round(from[1] + (to[1] - from[1]) * fraction);
    const k = Math.round(from[2] + (to[2] - from[2]) * fraction);
    if (i < 0 || j < 0 || k < 0 || i >= nx || j >= ny || k >= nz) {
      codes[sample] = OUTSIDE_SERIES_CODE;
      samplesOutsideSeries++;
    } else {
      codes[sample] = kindCodeOfLabel[labelMap[i + nx * (j + ny * k)]];
    }
  }
  return { sampling, codes, samplesOutsideSeries };
}

/** Length of the path inside each kind, mm, by kind code (codes with none left out). */
export function lengthsInsideKinds(profile: PathProfile): Map<number, number> {
  const lengths = new Map<number, number>();
  const half = profile.sampling.stepMm / 2;
  const { codes } = profile;
  for (let sample = 1; sample < codes.length; sample++) {
    for (const code of [codes[sample - 1], codes[sample]]) {
      if (code === 0 || code === OUTSIDE_SERIES_CODE) continue;
      lengths.set(code, (lengths.get(code) ?? 0) + half);
    }
  }
  return lengths;
}

/**
 * How often the path crosses the liver surface: the changes between inside the liver (liver or
 * tumour; a run of intrahepatic vessels or ducts between two such samples counts as inside)
 * and outside it, entering and leaving each counted.
 */
export function capsuleCrossings(profile: PathProfile): number {
  const liver = kindCode('liver');
  const tumour = kindCode('tumour');
  const intrahepatic = new Set(INTRAHEPATIC_KINDS.map(kindCode));
  const isHepatic = Array.from(profile.codes, (code) => code === liver || code === tumour);
  const { codes } = profile;
  let sample = 0;
  while (sample < codes.length) {
    if (!intrahepatic.has(codes[sample])) {
      sample++;
      continue;
    }
    let end = sample;
    while (end + 1 < codes.length && intrahepatic.has(codes[end + 1])) end++;
    if (sample > 0 && end + 1 < codes.length && isHepatic[sample - 1] && isHepatic[end + 1]) {
      isHepatic.fill(true, sample, end + 1);
    }
    sample = end + 1;
  }
  let crossings = 0;
  for (let index = 1; index < isHepatic.length; index++) {
    if (isHepatic[index] !== isHepatic[index - 1]) crossings++;
  }
  return crossings;
}

/**
 * Liver parenchyma (the liver kind, not tumour nor vessels) the path crosses before its first
 * tumour sample, mm; null when the path never enters a tumour.
 */
export function parenchymaBeforeTumourMm(profile: PathProfile): number | null {
  const liver = kindCode('liver');
  const firstTumour = profile.codes.indexOf(kindCode('tumour'));
  if (firstTumour < 0) return null;
  const half = profile.sampling.stepMm / 2;
  let lengthMm = 0;
  for (let sample = 1; sample <= firstTumour; sample++) {
    if (profile.codes[sample - 1] === liver) lengthMm += half;
    if (profile.codes[sample] === liver) lengthMm += half;
  }
  return lengthMm;
}
