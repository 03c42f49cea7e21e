/**
 * Speed of the physics zone model: the Pennes solver with Arrhenius and CEM43 damage against
 * grid size, a whole plan on a ~60 mm crop (goal: under 1 s on one core), and the calibration
 * of invented and demo applicator profiles with its leave-one-out check (goal: a few seconds
 * in a worker, once per profile version). Not a test: run it and read the figures.
 *
 *   node --import tsx shared/benchmarks/bioheat.bench.ts
 *
 * Wall time and this process's CPU time are both printed: on a machine shared with other jobs
 * the CPU time is the steadier figure. Beside them, a straightforward reference solver (no
 * padding, a branch per wall, Math.exp for every rate) runs the same problem once, to show what
 * the tight loop buys and that both agree.
 */
import {
  calibrateApplicatorProfile,
  simulateAblationZone,
  zoneCropGeometry,
  type ZoneApplicator,
} from '../src/bioheat';
import { applicatorHeatingPhases } from '../src/bioheat/applicator-heating';
import { stableTimeStepS } from '../src/bioheat/bioheat-grid';
import { arrheniusRatePerS, cem43RateMinutesPerS } from '../src/bioheat/thermal-damage';
import { LIVER_TISSUE, thermalDiffusivityM2PerS } from '../src/bioheat/tissue-properties';
import type { VolumeGeometry } from '../src/geometry/patient-geometry';
import type { Vec3 } from '../src/geometry/vector';

const IDENTITY: VolumeGeometry['direction'] = [
  [1, 0, 0],
  [0, 1, 0],
  [0, 0, 1],
];

/** An invented applicator: 20 mm active length, 60 W for 10 minutes, η = 0.3. */
function applicatorAt(tipLps: Vec3, timeS = 600): ZoneApplicator {
  return {
    tipLps,
    entryLps: [tipLps[0] + 30, tipLps[1] - 60, tipLps[2] + 70],
    activeLengthMm: 20,
    powerW: 60,
    timeS,
    calibration: 0.3,
  };
}

interface Timing {
  wallMs: number;
  cpuMs: number;
}

/**
 * Median wall and CPU time of `runs` calls (at least 1), after one warm-up unless told not to,
 * milliseconds, and the last result.
 */
function timed<T>(runs: number, run: () => T, isWarmedUp = true): Timing & { result: T } {
  let result = isWarmedUp ? run() : undefined;
  const samples: Timing[] = [];
  for (let index = 0; index < Math.max(1, runs); index++) {
    const cpuStart = process.cpuUsage();
    const wallStart = performance.now();
    result = run();
    const cpu = process.cpuUsage(cpuStart);
    samples.push({ wallMs: performance.now() - wallStart, cpuMs: (cpu.user + cpu.system) / 1000 });
  }
  if (result === undefined) throw new Error('nothing was run');
  const median = (values: number[]) => values.sort((a, b) => a - b)[Math.floor(values.length / 2)];
  return {
    wallMs: median(samples.map((sample) => sample.wallMs)),
    cpuMs: median(samples.map((sample) => sample.cpuMs)),
    result,
  };
}

function cubeAround(centreLps: Vec3, size: number, spacingMm: number): VolumeGeometry {
  const halfMm = ((size - 1) * spacingMm) / 2;
  return {
    dimensions: [size, size, size],
    spacingMm: [spacingMm, spacingMm, spacingMm],
    originLps: [centreLps[0] - halfMm, centreLps[1] - halfMm, centreLps[2] - halfMm],
    direction: IDENTITY,
  };
}

const format = (milliseconds: number) => milliseconds.toFixed(0).padStart(7);

console.log('1. Zone simulation against grid size: one applicator (60 W, 600 s), 2 mm spacing');
console.log('grid    voxels   steps   wall ms   cpu ms   ns per voxel-step (cpu)   zone ml');
for (const size of [32, 48, 64, 96]) {
  const geometry = cubeAround([0, 0, 0], size, 2);
  const applicator = applicatorAt([-5, 5, -10]);
  const runs = size >= 96 ? 1 : 3;
  const { wallMs, cpuMs, result } = timed(runs, () =>
    simulateAblationZone({ geometry, applicators: [applicator] }),
  );
  const voxelSteps = size ** 3 * result.stepCount;
  console.log(
    `${`${size}³`.padEnd(6)} ${String(size ** 3).padStart(7)} ${String(result.stepCount).padStart(7)} ` +
      `${format(wallMs)}  ${format(cpuMs)}   ${((cpuMs * 1e6) / voxelSteps).toFixed(1).padStart(12)}` +
      `               ${result.volumeMl.toFixed(1).padStart(6)}`,
  );
}

console.log('\n2. One plan on a ~60 mm crop (goal: under 1 s): two applicators 16 mm apart, 600 s');
const plan = [applicatorAt([-8, 0, 0]), applicatorAt([8, 0, 0], 480)];
for (const spacingMm of [2, 1.5]) {
  const geometry = zoneCropGeometry(plan, IDENTITY, [spacingMm, spacingMm, spacingMm], 22);
  const { wallMs, cpuMs, result } = timed(3, () =>
    simulateAblationZone({ geometry, applicators: plan }),
  );
  const extentMm = geometry.dimensions.map((n) => ((n - 1) * spacingMm).toFixed(0)).join(' × ');
  console.log(
    `${spacingMm} mm: grid ${geometry.dimensions.join(' × ')} (${extentMm} mm), ${result.stepCount} steps ` +
      `of ${result.timeStepS.toFixed(2)} s: wall ${wallMs.toFixed(0)} ms, cpu ${cpuMs.toFixed(0)} ms; ` +
      `zone ${result.volumeMl.toFixed(1)} ml`,
  );
}

console.log('\n3. Reference: a straightforward explicit solver on the 2 mm plan, run once');
{
  const geometry = zoneCropGeometry(plan, IDENTITY, [2, 2, 2], 22);
  const fast = timed(1, () => simulateAblationZone({ geometry, applicators: plan }));
  const reference = timed(1, () => referenceZone(geometry, plan), false);
  let largestGapK = 0;
  let maskDisagreements = 0;
  for (let index = 0; index < reference.result.omega.length; index++) {
    largestGapK = Math.max(
      largestGapK,
      Math.abs(reference.result.peakTemperatureC[index] - fast.result.peakTemperatureC[index]),
    );
    if ((reference.result.omega[index] >= 1 ? 1 : 0) !== fast.result.damageMask[index]) {
      maskDisagreements++;
    }
  }
  console.log(
    `reference wall ${reference.wallMs.toFixed(0)} ms, cpu ${reference.cpuMs.toFixed(0)} ms; ` +
      `tight loop wall ${fast.wallMs.toFixed(0)} ms, cpu ${fast.cpuMs.toFixed(0)} ms; ` +
      `peak temperatures differ by at most ${largestGapK.toExponential(1)} K, ` +
      `damage masks in ${maskDisagreements} of ${reference.result.omega.length} voxels`,
  );
}

console.log(
  '\n4. Calibration per profile with leave-one-out (invented zone tables and the demo profiles of ' +
    'server/seeders, 2 mm grid)',
);
const profiles: { name: string; rows: [number, number, number, number, number][] }[] = [
  {
    name: '2 powers × 2 times',
    rows: [
      [60, 300, 38, 28, 8],
      [60, 600, 45, 34, 9],
      [100, 300, 44, 33, 9],
      [100, 600, 52, 40, 10],
    ],
  },
  {
    name: '3 powers × 3 times',
    rows: [
      [40, 180, 30, 21, 7],
      [40, 360, 36, 26, 8],
      [40, 600, 40, 30, 8],
      [70, 180, 35, 25, 8],
      [70, 360, 42, 31, 9],
      [70, 600, 47, 35, 9],
      [100, 180, 38, 28, 8],
      [100, 360, 46, 34, 9],
      [100, 600, 51, 39, 10],
    ],
  },
];
const { demoApplicatorProfiles } = await import('../../server/seeders/demo-plans');
const calibrated = [
  ...profiles.map((profile) => ({
    name: profile.name,
    activeLengthMm: 20,
    zoneTable: profile.rows.map(([powerW, timeS, zoneLengthMm, zoneWidthMm, tipOffsetMm]) => ({
      powerW,
      timeS,
      zoneLengthMm,
      zoneWidthMm,
      tipOffsetMm,
    })),
  })),
  ...demoApplicatorProfiles,
];
const mm = (value: number | null) => (value === null ? '  –  ' : value.toFixed(2).padStart(5));
console.log(
  'profile                               rows runs  wall ms  cpu ms   η      γ    length offset  ' +
    'rms   max  LOO rms LOO max  plausible',
);
for (const profile of calibrated) {
  // Once: a calibration's runs are cached inside it, so a warm-up would measure nothing else.
  const { wallMs, cpuMs, result } = timed(1, () => calibrateApplicatorProfile(profile), false);
  const { parameters } = result;
  console.log(
    `${profile.name.slice(0, 36).padEnd(37)} ${String(profile.zoneTable.length).padStart(4)} ` +
      `${String(result.simulations).padStart(4)} ${format(wallMs)}  ${format(cpuMs)}  ` +
      `${parameters.couplingEfficiency.toFixed(3)} ${parameters.powerExponent.toFixed(2).padStart(5)} ` +
      `${parameters.heatingLengthMm.toFixed(1).padStart(6)} ${parameters.segmentOffsetMm.toFixed(1).padStart(6)} ` +
      `${mm(result.rmsResidualMm)} ${mm(result.maxResidualMm)}  ${mm(result.leaveOneOutRmsMm)}   ` +
      `${mm(result.leaveOneOutMaxMm)}  ${result.isImplausible ? `no: ${result.implausibleReason}` : 'yes'}`,
  );
}

/**
 * The same model written plainly: unpadded grid, a branch per wall, Math.exp for every rate,
 * the damage by the trapezoidal rule, perfusion scaled by exp(−Ω). For comparison only.
 */
function referenceZone(
  geometry: VolumeGeometry,
  applicators: readonly ZoneApplicator[],
): { omega: Float64Array; peakTemperatureC: Float64Array } {
  const [nx, ny, nz] = geometry.dimensions;
  const count = nx * ny * nz;
  const tissue = LIVER_TISSUE;
  const heatCapacity = tissue.densityKgPerM3 * tissue.specificHeatJPerKgK;
  const alpha = thermalDiffusivityM2PerS(tissue);
  const perfusionRate = (tissue.perfusionPerS * tissue.bloodHeatCapacityJPerM3K) / heatCapacity;
  const baseline = arrheniusRatePerS(tissue.arterialTemperatureC);
  const rate = (temperatureC: number) => Math.max(0, arrheniusRatePerS(temperatureC) - baseline);
  let rise = new Float64Array(count);
  let next = new Float64Array(count);
  const omega = new Float64Array(count);
  const cem43 = new Float64Array(count);
  const peakTemperatureC = new Float64Array(count).fill(tissue.arterialTemperatureC);
  const spacingM = geometry.spacingMm.map((h) => h / 1000);
  const maxStepS = stableTimeStepS(geometry, tissue);
  for (const phase of applicatorHeatingPhases(geometry, applicators)) {
    const steps = Math.ceil(phase.durationS / maxStepS - 1e-9);
    const stepS = phase.durationS / steps;
    const source = phase.powerDensityWPerM3 as Float64Array;
    for (let step = 0; step < steps; step++) {
      for (let k = 0; k < nz; k++) {
        for (let j = 0; j < ny; j++) {
          for (let i = 0; i < nx; i++) {
            const index = i + nx * (j + ny * k);
            const here = rise[index];
            const value = (di: number, dj: number, dk: number) => {
              const [a, b, c] = [i + di, j + dj, k + dk];
              if (a < 0 || b < 0 || c < 0 || a >= nx || b >= ny || c >= nz) return 0;
              return rise[a + nx * (b + ny * c)];
            };
            const laplacian =
              (value(-1, 0, 0) + value(1, 0, 0) - 2 * here) / spacingM[0] ** 2 +
              (value(0, -1, 0) + value(0, 1, 0) - 2 * here) / spacingM[1] ** 2 +
              (value(0, 0, -1) + value(0, 0, 1) - 2 * here) / spacingM[2] ** 2;
            const perfusion = perfusionRate * Math.exp(-omega[index]);
            next[index] =
              here + stepS * (alpha * laplacian - perfusion * here + source[index] / heatCapacity);
          }
        }
      }
      for (let index = 0; index < count; index++) {
        const before = rise[index] + tissue.arterialTemperatureC;
        const after = next[index] + tissue.arterialTemperatureC;
        omega[index] = Math.min(1e6, omega[index] + (stepS / 2) * (rate(before) + rate(after)));
        cem43[index] += (stepS / 2) * (cem43RateMinutesPerS(before) + cem43RateMinutesPerS(after));
        peakTemperatureC[index] = Math.max(peakTemperatureC[index], after);
      }
      [rise, next] = [next, rise];
    }
  }
  return { omega, peakTemperatureC };
}
