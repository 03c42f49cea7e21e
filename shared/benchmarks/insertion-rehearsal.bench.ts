/**
 * Speed and accuracy of the robot-assisted insertion rehearsal (shared/src/rehearsal/assisted)
 * on the demo's invented liver (sample-data/abdomen, painted in memory) at the three mesh
 * resolutions (coarse 8, medium 6, fine 4 mm cells): the first demo plan (anterior subcostal,
 * segment VIII: skin entry (−32, −50, 0) to the planned tip (−32, −8.4, 26.9), LPS mm),
 * breathing 12 mm / 4 s / n = 2 (Lujan), h = 50 ms, 25 mm/s, half a breath of warm-up, start at
 * three quarters of the breath. Not a test: run it and read the figures.
 *
 *   node --import tsx shared/benchmarks/insertion-rehearsal.bench.ts [coarse,medium,fine]
 *
 * For each mesh: a warm-up run (JIT; not kept), a free-hand run (its insertion steps are the
 * plain simulation steps), then the
 * assisted run with each Jacobian strategy ('full-step' = a, 'resolve-constraints' = b,
 * 'pseudo-constraints' = c, 'factorised' = beyond c), 12 perturbations (central differences) a
 * control step. Times are wall-clock medians over the insertion's steps (at least 20); a control
 * step includes the free motion, the Jacobian, the update and the kept step. Prints a table and,
 * as its last line, one JSON object.
 */
import { buildPhantom } from '../../sample-data/abdomen/phantom';
import { paintLayers } from '../../sample-data/abdomen/rasterise';
import { ABDOMEN_GRID as grid, gridGeometry } from '../../sample-data/abdomen/grid';
import type { RehearsalStrategy } from '../src/api/assessments';
import type { VolumeGeometry } from '../src/geometry/patient-geometry';
import type { Vec3 } from '../src/geometry/vector';
import { rehearseAssisted } from '../src/rehearsal/assisted';
import { rehearseFreehand, type FreehandOptions } from '../src/rehearsal/insertion';
import { buildOrganMesh } from '../src/rehearsal/mesh';

const resolutions = (process.argv[2] ?? 'coarse,medium,fine').split(',') as (
  'coarse' | 'medium' | 'fine'
)[];
const phantom = buildPhantom();
const painted = paintLayers(grid, phantom.layers);
const geometry: VolumeGeometry = gridGeometry(grid);
const organLabels = phantom.structures
  .filter((structure) => structure.kind === 'liver' || structure.kind === 'tumour')
  .map((structure) => structure.labelValue);
const plan = { startMm: [-32, -50, 0] as Vec3, targetMm: [-32, -8.4, 26.9] as Vec3 };
const strategies: [RehearsalStrategy, string][] = [
  ['full-step', 'A'],
  ['resolve-constraints', 'B'],
  ['pseudo-constraints', 'C'],
  ['factorised', 'Factorised'],
];

const rows: Record<string, number | string>[] = [];
for (const resolution of resolutions) {
  const { mesh } = buildOrganMesh({ labels: painted.labels, geometry, organLabels, resolution });
  const options: FreehandOptions = {
    mesh,
    plan,
    speedMmPerS: 25,
    solver: { timeStepS: 0.05 },
    warmUpCycles: 0.5,
    startPhase: 0.75,
    boundary: { breathing: { amplitudeMm: 12, periodS: 4, shapeN: 2 } },
  };
  // A first run warms the JIT up (its figures are not kept), then the measured plain run.
  rehearseAssisted({ ...options, control: { strategy: 'pseudo-constraints' } });
  const freehand = rehearseFreehand(options);
  const row: Record<string, number | string> = {
    label: resolution,
    nodes: mesh.nodes.length / 3,
    perturbations: 12,
    steps: freehand.path.length,
    plainStepMs: round(freehand.timing.stepMedianMs),
    freehandTipErrorMm: round(freehand.finalTipErrorMm, 3),
  };
  for (const [strategy, name] of strategies) {
    const assisted = rehearseAssisted({ ...options, control: { strategy } });
    row[`strategy${name}StepMs`] = round(assisted.timing.stepMedianMs);
    row[`strategy${name}JacobianMs`] = round(assisted.jacobianMedianMs, 2);
    row[`strategy${name}TipErrorMm`] = round(assisted.finalTipErrorMm, 3);
    if (strategy === 'pseudo-constraints')
      row.assistedTipErrorMm = round(assisted.finalTipErrorMm, 3);
    console.error(`${resolution} ${strategy}: ${round(assisted.timing.stepMedianMs)} ms a step`);
  }
  rows.push(row);
}

function round(value: number, digits = 1): number {
  return Number(value.toFixed(digits));
}

console.log(
  'mesh    nodes  steps  plain ms   (a) ms  (b) ms  (c) ms  fact. ms   (c)/plain  (a)/(c)  ' +
    'tip error free-hand / assisted (c), mm',
);
for (const row of rows) {
  const plain = row.plainStepMs as number;
  const c = row.strategyCStepMs as number;
  console.log(
    [
      String(row.label).padEnd(7),
      String(row.nodes).padStart(5),
      String(row.steps).padStart(6),
      String(plain).padStart(9),
      String(row.strategyAStepMs).padStart(8),
      String(row.strategyBStepMs).padStart(7),
      String(c).padStart(7),
      String(row.strategyFactorisedStepMs).padStart(9),
      (c / plain).toFixed(2).padStart(11),
      ((row.strategyAStepMs as number) / c).toFixed(1).padStart(8),
      `  ${row.freehandTipErrorMm} / ${row.assistedTipErrorMm}`,
    ].join(' '),
  );
}
console.log(
  JSON.stringify({
    meshes: rows.map((row) => ({
      label: row.label,
      nodes: row.nodes,
      perturbations: row.perturbations,
      plainStepMs: row.plainStepMs,
      strategyAStepMs: row.strategyAStepMs,
      strategyBStepMs: row.strategyBStepMs,
      strategyCStepMs: row.strategyCStepMs,
      strategyFactorisedStepMs: row.strategyFactorisedStepMs,
      assistedTipErrorMm: row.assistedTipErrorMm,
      freehandTipErrorMm: row.freehandTipErrorMm,
    })),
  }),
);
