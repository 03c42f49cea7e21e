/**
 * Speed of one implicit step of the rehearsal's tissue solver (shared/src/rehearsal/fem) on a
 * block of about 3000 nodes: a 152 × 104 × 80 mm box of 8 mm cells (liver-sized), liver
 * material, h = 20 ms. Its top face is driven by a breathing-like motion (12 mm along z, 4 s
 * period), its bottom face is held by soft springs, and a patch of its front face is attached
 * more stiffly (an abdominal-wall entry). Not a test: run it and read the figures.
 *
 *   node --import tsx shared/benchmarks/fem-step.bench.ts
 *
 * For each preconditioner (incomplete Cholesky, Jacobi) prints the median wall and CPU time of
 * 20 steps after 5 warm-up steps, the conjugate-gradient iterations, and the time of one
 * solveSystem() call (what a constraint solver pays per constraint row). On a machine shared
 * with other jobs the CPU time is the steadier figure.
 */
import { TissueSolver, type DrivenNode, type SoftAttachment } from '../src/rehearsal/fem';
import { blockMesh, nodesOnPlane } from '../src/rehearsal/fem/testing/block-mesh';

const SIZE_MM = [152, 104, 80] as const;
const mesh = blockMesh([19, 13, 10], SIZE_MM);

const driven: DrivenNode[] = nodesOnPlane(mesh, 2, SIZE_MM[2]).map((node) => {
  const x = mesh.nodes[3 * node] / 1000;
  const y = mesh.nodes[3 * node + 1] / 1000;
  const z = mesh.nodes[3 * node + 2] / 1000;
  return {
    node,
    positionM: (t: number) => [x, y, z - 0.012 * Math.sin((Math.PI * t) / 4) ** 2],
  };
});
const spring = (node: number, stiffnessNPerM: number): SoftAttachment => ({
  node,
  stiffnessNPerM,
  targetM: [
    mesh.nodes[3 * node] / 1000,
    mesh.nodes[3 * node + 1] / 1000,
    mesh.nodes[3 * node + 2] / 1000,
  ],
});
const attachments = nodesOnPlane(mesh, 2, 0).map((node) => spring(node, 0.5));
for (const node of nodesOnPlane(mesh, 1, 0)) {
  const x = mesh.nodes[3 * node];
  const z = mesh.nodes[3 * node + 2];
  if (Math.abs(x - 76) <= 16 && Math.abs(z - 40) <= 16) attachments.push(spring(node, 5));
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[values.length >> 1];

for (const preconditioner of ['incomplete-cholesky', 'jacobi'] as const) {
  const setupStart = performance.now();
  const solver = new TissueSolver(mesh, {
    timeStepS: 0.02,
    boundary: { driven, attachments },
    preconditioner,
  });
  const gravity = new Float64Array(3 * solver.nodeCount);
  for (let node = 0; node < solver.nodeCount; node++) {
    gravity[3 * node + 2] = -9.81 * solver.massKg[node];
  }
  solver.setExternalForces(gravity);
  const setupMs = performance.now() - setupStart;
  console.log(
    `\n${preconditioner}: ${solver.nodeCount} nodes, ${mesh.tets.length / 4} tets, ` +
      `${3 * solver.nodeCount} unknowns; ${driven.length} driven, ${attachments.length} attached; ` +
      `set-up ${setupMs.toFixed(0)} ms`,
  );
  for (let step = 0; step < 5; step++) solver.step();

  const samples: { wallMs: number; cpuMs: number; iterations: number }[] = [];
  for (let step = 0; step < 20; step++) {
    const cpuStart = process.cpuUsage();
    const wallStart = performance.now();
    const report = solver.step();
    const cpu = process.cpuUsage(cpuStart);
    samples.push({
      wallMs: performance.now() - wallStart,
      cpuMs: (cpu.user + cpu.system) / 1000,
      iterations: report.solve.iterations,
    });
  }
  const iterations = samples.map((sample) => sample.iterations);
  console.log(
    `  step (h = 20 ms, tolerance 1e-6): median wall ` +
      `${median(samples.map((sample) => sample.wallMs)).toFixed(1)} ms, cpu ` +
      `${median(samples.map((sample) => sample.cpuMs)).toFixed(1)} ms; PCG iterations median ` +
      `${median(iterations)}, range ${Math.min(...iterations)}–${Math.max(...iterations)}`,
  );

  // One constraint row: a unit impulse on one node near the middle, along y.
  const rhs = new Float64Array(3 * solver.nodeCount);
  rhs[3 * mesh.nodeAt(9, 6, 5) + 1] = 1;
  const out = new Float64Array(rhs.length);
  const solveSamples: number[] = [];
  let solveIterations = 0;
  for (let run = 0; run < 5; run++) {
    const start = performance.now();
    solveIterations = solver.solveSystem(rhs, out).iterations;
    solveSamples.push(performance.now() - start);
  }
  console.log(
    `  solveSystem (one constraint row): median wall ${median(solveSamples).toFixed(1)} ms, ` +
      `${solveIterations} PCG iterations`,
  );
  const top = driven[Math.floor(driven.length / 2)].node;
  console.log(
    `  t = ${solver.timeS.toFixed(2)} s: a top node moved ` +
      `${((solver.positionsM[3 * top + 2] - solver.restPositionsM[3 * top + 2]) * 1000).toFixed(3)} mm along z`,
  );
}
