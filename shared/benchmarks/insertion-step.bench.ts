/**
 * Speed of the insertion rehearsal (shared/src/rehearsal/insertion) on a liver-sized mesh of
 * about 3000 nodes: an ellipsoid of semi-axes 90 × 70 × 75 mm meshed at 10 mm, breathing
 * 12 mm / 4 s (Lujan, n = 2), a free-hand insertion from 60 mm in front of the organ to its
 * centre at 10 mm/s, h = 20 ms, precomputed compliance. Not a test: run it and read the figures.
 *
 *   node --import tsx shared/benchmarks/insertion-step.bench.ts [exact]
 *
 * Prints the compliance precomputation, then medians over the insertion's steps of the free
 * motion and of the constraint solve (building W, Gauss–Seidel, correction solves), by phase
 * (contact before puncture, shaft after it). On a machine shared with other jobs the CPU/wall
 * ratio of the whole run is printed too.
 */
import { ellipsoidOrganMesh } from '../src/rehearsal/insertion/testing/ellipsoid-organ';
import { rehearseFreehand } from '../src/rehearsal/insertion/rehearse-freehand';
import type { StepRecord } from '../src/rehearsal/insertion/insertion-simulation';

const compliance = process.argv[2] === 'exact' ? 'exact' : 'precomputed';
const meshStart = performance.now();
const mesh = ellipsoidOrganMesh([90, 70, 75], 10);
console.log(
  `mesh: ${mesh.nodes.length / 3} nodes, ${mesh.tets.length / 4} tets, ` +
    `${(performance.now() - meshStart).toFixed(0)} ms`,
);

const median = (values: number[]) =>
  values.length === 0 ? NaN : [...values].sort((a, b) => a - b)[values.length >> 1];
const records: StepRecord[] = [];
const stepCpuMs: number[] = [];
let lastCpu = process.cpuUsage();
const cpuStart = process.cpuUsage();
const wallStart = performance.now();
const result = rehearseFreehand({
  mesh,
  plan: { startMm: [5, -130, 10], targetMm: [0, 0, 0] },
  compliance,
  speedMmPerS: 10,
  solver: { timeStepS: 0.02 },
  startPhase: 0.5,
  onStep: (record) => {
    records.push(record);
    const now = process.cpuUsage();
    stepCpuMs.push((now.user - lastCpu.user + now.system - lastCpu.system) / 1000);
    lastCpu = now;
  },
});
const cpu = process.cpuUsage(cpuStart);
const wallMs = performance.now() - wallStart;
console.log(
  `run: ${result.timing.steps} steps, wall ${(wallMs / 1000).toFixed(1)} s, ` +
    `CPU ${((cpu.user + cpu.system) / 1e6).toFixed(1)} s`,
);
console.log(
  `compliance precomputation: ${result.timing.precomputeMs.toFixed(0)} ms`,
  result.compliance,
);
const phases: [string, (r: StepRecord) => boolean][] = [
  ['breathing only', (r) => r.needle === null],
  ['approach/contact', (r) => r.needle !== null && r.needle.phase !== 'punctured'],
  ['shaft (punctured)', (r) => r.needle?.phase === 'punctured'],
];
for (const [label, test] of phases) {
  const chosen = records.filter(test);
  if (chosen.length === 0) continue;
  const cpuMs = median(stepCpuMs.filter((_, i) => test(records[i])));
  const m = (f: (r: StepRecord) => number) => median(chosen.map(f)).toFixed(1);
  console.log(
    `${label}: ${chosen.length} steps; whole step CPU ${cpuMs.toFixed(1)} ms; free motion ${m((r) => r.freeMotionMs)} ms ` +
      `(${m((r) => r.freeMotionIterations)} CG it.); constraints ${m((r) => r.constraintMs)} ms ` +
      `= W ${m((r) => r.constraintParts.complianceMs)} + GS ${m((r) => r.constraintParts.gaussSeidelMs)} ` +
      `+ correction ${m((r) => r.constraintParts.correctionMs)} (${m((r) => r.constraintParts.systemSolves)} solves); ` +
      `rows ${m((r) => r.rows)}, sweeps ${m((r) => r.sweeps)}, ` +
      `largest bilateral residual ${Math.max(...chosen.map((r) => r.bilateralResidualM)).toExponential(1)} m`,
  );
}
console.log(
  `final tip error ${result.finalTipErrorMm.toFixed(2)} mm (across ${result.finalLateralErrorMm.toFixed(2)}), ` +
    `target breathing range ${result.target.breathingSiRangeMm.toFixed(2)} mm, ` +
    `puncture at ${result.puncture?.depthMm.toFixed(1)} mm`,
);
