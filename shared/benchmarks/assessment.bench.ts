/**
 * Time per stage of a plan assessment on the grid of the invented sample CT (192 × 160 × 64
 * voxels of 0.8 × 0.8 × 2.5 mm, painted in memory from sample-data/abdomen, no files needed),
 * and exact distance-transform throughput beside a straightforward port of the same algorithm
 * and other references in the same run. Not a test: run it and read the figures. Aims: a whole
 * plan (table model) well under 2 s on one core on the sample grid; under 3 s warm with both zone
 * models on the clinical grid; the EDT at least as fast as the plain port.
 *
 *   node --import tsx shared/benchmarks/assessment.bench.ts [--bioheat] [--clinical]
 *
 * `--bioheat` adds runs with the physics zone (cold, and warm with the distance-field cache).
 * `--clinical` paints the same anatomy on the clinical-size grid (512 × 512 × 240 voxels of
 * 0.7 × 0.7 × 1.25 mm, `CLINICAL_GRID`) instead.
 */
import { buildPhantom } from '../../sample-data/abdomen/phantom';
import { paintLayers } from '../../sample-data/abdomen/rasterise';
import { ABDOMEN_GRID, CLINICAL_GRID, gridGeometry } from '../../sample-data/abdomen/grid';
import type { SafetyProfileBody } from '../src/api/safety-profiles';
import { calibrateApplicatorProfile } from '../src/bioheat';
import {
  assessPlan,
  createDistanceFieldCache,
  type AssessmentInput,
  type AssessmentStage,
  type AssessPlanOutput,
} from '../src/assessment';
import { kindCode, takeLabelInventory } from '../src/assessment/label-inventory';
import { pathProfile } from '../src/assessment/path-profile';
import { euclideanDistanceTransform } from '../src/geometry/distance-transform';
import type { GridDimensions, VolumeGeometry } from '../src/geometry/patient-geometry';
import { addScaled, normalize, type Vec3 } from '../src/geometry/vector';

const withBioheat = process.argv.includes('--bioheat');
const grid = process.argv.includes('--clinical') ? CLINICAL_GRID : ABDOMEN_GRID;

const paintStartedAt = performance.now();
const phantom = buildPhantom();
const painted = paintLayers(grid, phantom.layers);
const geometry: VolumeGeometry = gridGeometry(grid);
const labelMap = painted.labels;
const structures = phantom.structures.map((structure) => ({
  id: structure.name,
  labelValue: structure.labelValue,
  kind: structure.kind,
}));
console.log(
  `${grid === CLINICAL_GRID ? 'Clinical-size' : 'Sample'} CT grid ${geometry.dimensions.join(' × ')} at ${geometry.spacingMm.join(' × ')} mm ` +
    `(${labelMap.length.toLocaleString('en')} voxels), painted in ` +
    `${(performance.now() - paintStartedAt).toFixed(0)} ms.`,
);

// An invented safety profile and zone table (values of the kind the trade uses; not advice).
const safetyProfile: SafetyProfileBody = {
  name: 'Benchmark profile',
  structureRules: [
    { kind: 'hepatic-artery', minimumClearanceMm: 5, isCritical: true, source: 'common practice' },
    { kind: 'bile-duct', minimumClearanceMm: 5, isCritical: true, source: 'common practice' },
    { kind: 'portal-vein', minimumClearanceMm: 3, isCritical: false, source: 'common practice' },
    { kind: 'hepatic-vein', minimumClearanceMm: 3, isCritical: false, source: 'common practice' },
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: false, source: 'from memory' },
    { kind: 'bowel', minimumClearanceMm: 10, isCritical: true, source: 'from memory' },
    { kind: 'stomach', minimumClearanceMm: 10, isCritical: true, source: 'from memory' },
    { kind: 'lung', minimumClearanceMm: 5, isCritical: true, source: 'common practice' },
    { kind: 'heart', minimumClearanceMm: 10, isCritical: true, source: 'common practice' },
    { kind: 'kidney', minimumClearanceMm: 5, isCritical: false, source: 'common practice' },
    { kind: 'bone', minimumClearanceMm: 2, isCritical: true, source: 'common practice' },
  ],
  marginTargetMm: 5,
  marginTargetSource: 'common practice',
  marginMinimumMm: 0,
  marginMinimumSource: 'Wang X et al., Cardiovasc Intervent Radiol 2013;36:166',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['portal-vein', 'hepatic-vein'],
  heatSinkSource: 'Lu DSK et al., AJR 2002;178:47',
  maximumAngulationDeg: 45,
  angulationSource: 'common practice',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource: 'common practice',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'common practice',
  physicsToleranceMm: 2,
  physicsToleranceSource: 'common practice',
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource: 'common practice',
};
const zoneTable = [
  { powerW: 60, timeS: 300, zoneLengthMm: 40, zoneWidthMm: 32, tipOffsetMm: 5 },
  { powerW: 60, timeS: 600, zoneLengthMm: 48, zoneWidthMm: 38, tipOffsetMm: 6 },
  { powerW: 100, timeS: 300, zoneLengthMm: 46, zoneWidthMm: 36, tipOffsetMm: 6 },
  { powerW: 100, timeS: 600, zoneLengthMm: 56, zoneWidthMm: 44, tipOffsetMm: 8 },
];

/**
 * A lateral approach to the segment VIII tumour: of a fan of directions from its centre, the
 * first whose way out to the skin crosses no bone, lung or heart; the entry is on the skin.
 */
function lateralApproach(): { entry: Vec3; target: Vec3 } {
  const tumour = phantom.tumours[0];
  const inventory = takeLabelInventory(labelMap, geometry.dimensions, structures);
  const avoided = new Set((['bone', 'lung', 'heart'] as const).map(kindCode));
  const skin = kindCode('skin');
  for (const tilt of [0, 0.1, -0.1, 0.2, -0.2, 0.3, -0.3]) {
    for (const back of [0, 0.2, -0.2, 0.4]) {
      const outwards = normalize([-1, back, tilt]);
      const far = addScaled(tumour.centreLps, outwards, 90);
      const profile = pathProfile(
        labelMap,
        geometry,
        inventory.kindCodeOfLabel,
        tumour.centreLps,
        far,
      );
      const codes = [...profile.codes];
      const lastSkin = codes.lastIndexOf(skin);
      if (lastSkin < 0 || codes.slice(0, lastSkin).some((code) => avoided.has(code))) continue;
      const entry = addScaled(tumour.centreLps, outwards, lastSkin * profile.sampling.stepMm);
      // The tip goes 5 mm past the centre so that the zone (centred ~6 mm behind it) sits on it.
      return { entry, target: addScaled(tumour.centreLps, outwards, -5) };
    }
  }
  throw new Error('no approach free of bone and lung in the fan');
}

const approach = lateralApproach();
const baseInput: AssessmentInput = {
  geometry,
  labelMap,
  structures,
  applicators: [
    {
      entry: approach.entry,
      target: approach.target,
      profile: { workingLengthMm: 150, activeLengthMm: 20, zoneTable },
      powerW: 80,
      timeS: 450,
    },
  ],
  safetyProfile,
  options: { zoneModels: ['table'], cropMarginMm: 20 },
  seriesKey: 'sample-ct',
};

function stageLine(output: AssessPlanOutput): string {
  return Object.entries(output.timingsMs)
    .map(([stage, milliseconds]) => `${stage} ${(milliseconds as number).toFixed(0)}`)
    .join(', ');
}

function totalMs(output: AssessPlanOutput): number {
  return Object.values(output.timingsMs).reduce((sum, value) => sum + (value ?? 0), 0);
}

async function timedRun(input: AssessmentInput, options: Parameters<typeof assessPlan>[1] = {}) {
  const startedAt = performance.now();
  const output = await assessPlan(input, options);
  return { output, wallMs: performance.now() - startedAt };
}

const crops = (await assessPlan(baseInput)).crops;
const crop = crops.path;
const voxelsOf = (box: { size: number[] }) => box.size.reduce((product, size) => product * size, 1);
console.log(
  `Plan: one applicator, ${baseInput.applicators[0].powerW} W for ${baseInput.applicators[0].timeS} s, ` +
    `entry (${approach.entry.map((value) => value.toFixed(1)).join(', ')}) → tip ` +
    `(${approach.target.map((value) => value.toFixed(1)).join(', ')}) mm LPS;\n  path crop ` +
    `${crop.box.size.join(' × ')} (${voxelsOf(crop.box).toLocaleString('en')} voxels), zone crop ` +
    `${crops.zone.box.size.join(' × ')} (${voxelsOf(crops.zone.box).toLocaleString('en')} voxels).`,
);

const coldRuns: { output: AssessPlanOutput; wallMs: number }[] = [];
for (let run = 0; run < 5; run++) coldRuns.push(await timedRun(baseInput));
coldRuns.sort((a, b) => a.wallMs - b.wallMs);
const median = coldRuns[2];
console.log(
  `\nTable model, no cache (median of 5 runs after one warm-up): ${median.wallMs.toFixed(0)} ms`,
);
console.log(`  per stage, ms: ${stageLine(median.output)}`);
const stages = median.output.timingsMs as Record<AssessmentStage, number>;
console.log(
  `  distance fields ${(((stages['distance-fields'] ?? 0) / totalMs(median.output)) * 100).toFixed(0)} % of the stage time`,
);

const cache = createDistanceFieldCache();
await assessPlan(baseInput, { cache });
const warm = await timedRun(baseInput, { cache });
console.log(`Table model, same plan again with the cache: ${warm.wallMs.toFixed(0)} ms`);
console.log(`  per stage, ms: ${stageLine(warm.output)}`);
const draggedInput: AssessmentInput = {
  ...baseInput,
  applicators: baseInput.applicators.map((applicator) => ({
    ...applicator,
    entry: addScaled(applicator.entry, [0, 0, 1], 2),
  })),
};
const dragged = await timedRun(draggedInput, { cache });
console.log(
  `Table model, entry moved 2 mm, with the cache: ${dragged.wallMs.toFixed(0)} ms ` +
    `(crop ${JSON.stringify(dragged.output.crops.path.box) === JSON.stringify(crop.box) ? 'kept' : 'changed'})`,
);

const { result } = median.output;
console.log(
  `\nVerdict: ${result.verdict.level}; ${result.verdict.reasons.length} reason(s): ` +
    result.verdict.reasons
      .map((reason) => `${reason.rule}${reason.kind ? ` (${reason.kind})` : ''}`)
      .join(', '),
);
const tumour = result.zones[0].tumours[0];
console.log(
  `Table zone ${result.zones[0].volumeMl.toFixed(1)} mL; tumour ${tumour.structureId} ` +
    `${tumour.volumeMl.toFixed(2)} mL, covered ${tumour.coveredPercent.toFixed(1)} %, minimal margin ` +
    `${tumour.minimalMarginMm.toFixed(1)} mm; heat sinks ${result.heatSinks.length}.`,
);

if (withBioheat) {
  // Fitted once per profile version and stored by the server: not part of an assessment's time.
  const cpuBefore = process.cpuUsage();
  const calibratedAt = performance.now();
  const calibration = calibrateApplicatorProfile({ activeLengthMm: 20, zoneTable });
  const cpu = process.cpuUsage(cpuBefore);
  console.log(
    `\nCalibration of the bench profile (${zoneTable.length} rows): ` +
      `${(performance.now() - calibratedAt).toFixed(0)} ms wall, ` +
      `${((cpu.user + cpu.system) / 1000).toFixed(0)} ms cpu, ${calibration.simulations} runs; ` +
      `rms ${calibration.rmsResidualMm.toFixed(2)} mm, leave-one-out largest ` +
      `${calibration.leaveOneOutMaxMm?.toFixed(2) ?? '–'} mm` +
      (calibration.isImplausible ? ` (implausible: ${calibration.implausibleReason})` : ''),
  );
  const bothModels: AssessmentInput = {
    ...baseInput,
    applicators: baseInput.applicators.map((applicator) => ({ ...applicator, calibration })),
    options: { zoneModels: ['table', 'bioheat'], cropMarginMm: 20 },
  };
  const bioheat = await timedRun(bothModels);
  console.log(`\nTable + bioheat models, no cache: ${bioheat.wallMs.toFixed(0)} ms`);
  console.log(`  per stage, ms: ${stageLine(bioheat.output)}`);
  const bioheatCache = createDistanceFieldCache();
  await assessPlan(bothModels, { cache: bioheatCache });
  const bioheatWarm = await timedRun(bothModels, { cache: bioheatCache });
  console.log(`Table + bioheat models, warm distance fields: ${bioheatWarm.wallMs.toFixed(0)} ms`);
  console.log(`  per stage, ms: ${stageLine(bioheatWarm.output)}`);
  const physics = bioheat.output.result.zones.find((zone) => zone.model === 'bioheat');
  console.log(
    `  bioheat zone ${physics?.volumeMl.toFixed(1)} mL; margin ` +
      `${physics?.tumours[0]?.minimalMarginMm.toFixed(1)} mm; boundary error ` +
      `${physics?.boundaryErrorMm?.toFixed(2)} mm; verdict ${bioheat.output.result.verdict.level} ` +
      `on the ${bioheat.output.result.primaryZoneModel} zone` +
      (physics?.isAdvisory ? `; physics advisory: ${physics.advisoryReason}` : ''),
  );
}

// Distance-transform throughput, exact (Felzenszwalb & Huttenlocher 2012) beside references.
function cityBlockTransform(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float32Array {
  const [nx, ny, nz] = dimensions;
  const [wx, wy, wz] = spacingMm;
  const field = Float32Array.from(mask, (value) => (value !== 0 ? 0 : Infinity));
  for (let z = 0; z < nz; z++) {
    for (let y = 0; y < ny; y++) {
      for (let x = 0; x < nx; x++) {
        const index = x + nx * (y + ny * z);
        let best = field[index];
        if (x > 0) best = Math.min(best, field[index - 1] + wx);
        if (y > 0) best = Math.min(best, field[index - nx] + wy);
        if (z > 0) best = Math.min(best, field[index - nx * ny] + wz);
        field[index] = best;
      }
    }
  }
  for (let z = nz - 1; z >= 0; z--) {
    for (let y = ny - 1; y >= 0; y--) {
      for (let x = nx - 1; x >= 0; x--) {
        const index = x + nx * (y + ny * z);
        let best = field[index];
        if (x < nx - 1) best = Math.min(best, field[index + 1] + wx);
        if (y < ny - 1) best = Math.min(best, field[index + nx] + wy);
        if (z < nz - 1) best = Math.min(best, field[index + nx * ny] + wz);
        field[index] = best;
      }
    }
  }
  return field;
}

/**
 * Felzenszwalb & Huttenlocher's lower envelope of parabolas, ported as the paper gives it: one
 * 1-D pass per axis over plain typed arrays, a fresh line buffer per line, no box or early
 * exits. The reference the product's EDT must at least match.
 */
function plainPortTransform(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float32Array {
  const [nx, ny, nz] = dimensions;
  const squared = Float64Array.from(mask, (value) => (value !== 0 ? 0 : Infinity));
  const strides = [1, nx, nx * ny];
  for (let axis = 0; axis < 3; axis++) {
    const length = dimensions[axis];
    const weight = spacingMm[axis] ** 2;
    const stride = strides[axis];
    const others = (nx * ny * nz) / length;
    for (let line = 0; line < others; line++) {
      // The first voxel of this line: enumerate the other two axes.
      let start: number;
      if (axis === 0) start = line * nx;
      else if (axis === 1) start = (line % nx) + Math.floor(line / nx) * nx * ny;
      else start = line;
      const f = new Float64Array(length);
      for (let q = 0; q < length; q++) f[q] = squared[start + q * stride];
      const vertices = new Int32Array(length);
      const boundaries = new Float64Array(length + 1);
      let k = -1;
      for (let q = 0; q < length; q++) {
        if (f[q] === Infinity) continue;
        for (;;) {
          if (k < 0) {
            k = 0;
            vertices[0] = q;
            boundaries[0] = -Infinity;
            boundaries[1] = Infinity;
            break;
          }
          const v = vertices[k];
          const s = (f[q] + weight * q * q - (f[v] + weight * v * v)) / (2 * weight * (q - v));
          if (s <= boundaries[k]) {
            k--;
            continue;
          }
          k++;
          vertices[k] = q;
          boundaries[k] = s;
          boundaries[k + 1] = Infinity;
          break;
        }
      }
      let j = 0;
      for (let q = 0; q < length; q++) {
        if (k < 0) {
          squared[start + q * stride] = Infinity;
          continue;
        }
        while (boundaries[j + 1] < q) j++;
        const v = vertices[j];
        squared[start + q * stride] = weight * (q - v) * (q - v) + f[v];
      }
    }
  }
  return Float32Array.from(squared, Math.sqrt);
}

function bruteForceTransform(
  mask: Uint8Array,
  dimensions: GridDimensions,
  spacingMm: Vec3,
): Float32Array {
  const [nx, ny] = dimensions;
  const seeds: Vec3[] = [];
  mask.forEach((value, index) => {
    if (value !== 0)
      seeds.push([index % nx, Math.floor(index / nx) % ny, Math.floor(index / (nx * ny))]);
  });
  return Float32Array.from(mask, (_, index) => {
    const x = index % nx;
    const y = Math.floor(index / nx) % ny;
    const z = Math.floor(index / (nx * ny));
    let best = Infinity;
    for (const [sx, sy, sz] of seeds) {
      const squared =
        ((x - sx) * spacingMm[0]) ** 2 +
        ((y - sy) * spacingMm[1]) ** 2 +
        ((z - sz) * spacingMm[2]) ** 2;
      if (squared < best) best = squared;
    }
    return Math.sqrt(best);
  });
}

function timeMs(runs: number, work: () => Float32Array): { ms: number; result: Float32Array } {
  let result = work();
  const times: number[] = [];
  for (let run = 0; run < runs; run++) {
    const startedAt = performance.now();
    result = work();
    times.push(performance.now() - startedAt);
  }
  times.sort((a, b) => a - b);
  return { ms: times[Math.floor(times.length / 2)], result };
}

const perSecond = (voxels: number, ms: number) => {
  const rate = (voxels / ms) * 1000;
  return rate >= 1e6
    ? `${(rate / 1e6).toFixed(1)} Mvoxel/s`
    : `${(rate / 1e3).toFixed(1)} kvoxel/s`;
};
const veinLabel =
  phantom.structures.find((structure) => structure.kind === 'hepatic-vein')?.labelValue ?? 0;
const veinMask = Uint8Array.from(labelMap, (value) => (value === veinLabel ? 1 : 0));
const spacing = geometry.spacingMm;
const exactWhole = timeMs(3, () =>
  euclideanDistanceTransform(veinMask, geometry.dimensions, spacing),
);
const portWhole = timeMs(3, () => plainPortTransform(veinMask, geometry.dimensions, spacing));
const cityWhole = timeMs(3, () => cityBlockTransform(veinMask, geometry.dimensions, spacing));
let portDifferenceMm = 0;
for (let index = 0; index < veinMask.length; index++) {
  const a = exactWhole.result[index];
  const b = portWhole.result[index];
  if (Number.isFinite(a) || Number.isFinite(b)) {
    portDifferenceMm = Math.max(portDifferenceMm, Math.abs(a - b));
  }
}
let overestimateMm = 0;
for (let index = 0; index < veinMask.length; index++) {
  overestimateMm = Math.max(overestimateMm, cityWhole.result[index] - exactWhole.result[index]);
}
console.log(
  `\nDistance transform of the hepatic veins on the whole grid (${labelMap.length.toLocaleString('en')} voxels, median of 3):`,
);
console.log(
  `  exact EDT ${exactWhole.ms.toFixed(0)} ms = ${perSecond(labelMap.length, exactWhole.ms)}`,
);
console.log(
  `  plain port of the same algorithm ${portWhole.ms.toFixed(0)} ms = ` +
    `${perSecond(labelMap.length, portWhole.ms)} (largest difference ${portDifferenceMm.toExponential(1)} mm)`,
);
console.log(
  `  naive two-pass city-block ${cityWhole.ms.toFixed(0)} ms = ${perSecond(labelMap.length, cityWhole.ms)} ` +
    `(an approximation: overestimates by up to ${overestimateMm.toFixed(1)} mm here)`,
);

// Brute force on a small grid around the segment VIII tumour: the exact answer, O(N·seeds).
const small: GridDimensions = [40, 40, 12];
// Centred on the segment VIII tumour, whatever the grid (its axes are those of LPS here).
const [ci, cj, ck] = [0, 1, 2].map((axis) =>
  Math.round((phantom.tumours[0].centreLps[axis] - geometry.originLps[axis]) / spacing[axis]),
);
const smallMask = new Uint8Array(small[0] * small[1] * small[2]);
for (let k = 0; k < small[2]; k++) {
  for (let j = 0; j < small[1]; j++) {
    for (let i = 0; i < small[0]; i++) {
      const value =
        labelMap[
          ci -
            20 +
            i +
            geometry.dimensions[0] * (cj - 20 + j + geometry.dimensions[1] * (ck - 6 + k))
        ];
      smallMask[i + small[0] * (j + small[1] * k)] = value === veinLabel || value === 2 ? 1 : 0;
    }
  }
}
const seedCount = smallMask.reduce((count, value) => count + value, 0);
const exactSmall = timeMs(5, () => euclideanDistanceTransform(smallMask, small, spacing));
const bruteSmall = timeMs(1, () => bruteForceTransform(smallMask, small, spacing));
let largestDifference = 0;
for (let index = 0; index < smallMask.length; index++) {
  largestDifference = Math.max(
    largestDifference,
    Math.abs(exactSmall.result[index] - bruteSmall.result[index]),
  );
}
console.log(
  `Small grid ${small.join(' × ')} (${smallMask.length.toLocaleString('en')} voxels, ${seedCount} seeds): exact EDT ` +
    `${perSecond(smallMask.length, exactSmall.ms)}, brute force ${perSecond(smallMask.length, bruteSmall.ms)}; ` +
    `largest difference ${largestDifference.toExponential(1)} mm.`,
);
