/**
 * Precomputed, warped compliance for the constraint solve (README, "Compliance").
 *
 * W = H·A⁻¹·Hᵀ needs A⁻¹ only on the nodes the rows touch. Once per plan, at rest and with the
 * run's boundary conditions, this solves A₀·x = e_k for every unknown k of the nodes the
 * needle's path can reach and keeps the block of A₀⁻¹ on those nodes. During the run the
 * corotational matrix is A ≈ R·A₀·Rᵀ with R block-diagonal (a rotation per node), so
 *
 *   A⁻¹[k, l] ≈ R_k·A₀⁻¹[k, l]·R_lᵀ,
 *
 * the compliance warping of Saupin, Duriez & Cotin (Contact model for haptic medical
 * simulations, ISBMS 2008 — from memory): exact for a rigid rotation of the whole body (the
 * corotational A then is Q·A₀·Qᵀ), approximate under deformation. R_k is the rotation of the
 * volume-weighted sum of the rotations of the node's tets (our choice).
 *
 * A row touching a node outside the table extends it: three more solves with A₀ give that node's
 * columns, and symmetry gives its rows.
 */
import { monotonicMs } from '../../assessment/assessment-stages';
import { rotationOfDeformation } from '../fem/polar-decomposition';
import { tetRestData } from '../fem/tet-element';
import {
  METRES_PER_MILLIMETRE,
  TissueSolver,
  type FemMesh,
  type TissueSolverOptions,
} from '../fem/tissue-solver';
import type { ConstraintRow } from './constraints';

/** What building and extending the table cost. */
export interface ComplianceStats {
  /** Nodes in the table. */
  nodes: number;
  /** Linear solves with A₀ so far (none for fixed or driven unknowns). */
  columnSolves: number;
  /** Wall time of those solves, ms. */
  solveMs: number;
  /** Nodes added after the first build because a row touched them. */
  extendedNodes: number;
}

/** A block of A₀⁻¹ on a set of nodes, and the warping that approximates A⁻¹ with it. */
export class PrecomputedCompliance {
  readonly stats: ComplianceStats = { nodes: 0, columnSolves: 0, solveMs: 0, extendedNodes: 0 };

  private readonly reference: TissueSolver;
  private readonly tets: Uint32Array;
  private readonly restInverse: Float64Array;
  private readonly volumes: Float64Array;
  /** Tets of each node (CSR). */
  private readonly nodeTetStart: Uint32Array;
  private readonly nodeTets: Uint32Array;
  private readonly constrained: Uint8Array;
  /** Node → slot in the table, −1 if absent. */
  private readonly slotOf: Int32Array;
  private slotNodes: number[] = [];
  /**
   * The whole columns of A₀⁻¹ of the table's unknowns (3 per slot; null for a fixed or driven
   * unknown), for the correction without a solve (`correction`).
   */
  private readonly fullColumns: (Float64Array | null)[] = [];
  private capacity = 0;
  /** Row-major (3·capacity)², A₀⁻¹ between slot unknowns. */
  private table = new Float64Array(0);
  private isBuilt = false;

  /**
   * Sets up A₀ = the step matrix at rest, with the boundary conditions and material of
   * `solverOptions` (those of the run's solver), and solves for the columns of `nodes`.
   */
  constructor(
    mesh: FemMesh,
    solverOptions: TissueSolverOptions,
    nodes: ArrayLike<number>,
    /**
     * Relative residual of the column solves: default the run's own tolerance, but at most
     * 10⁻⁸ (columns solved to 10⁻⁶ / 10⁻⁸ / 10⁻¹⁰ gave W within 3·10⁻⁷ / 2·10⁻⁹ / 2·10⁻¹¹ of
     * the exact one on the test ellipsoid; the table is built once, so a little more is cheap).
     */
    columnTolerance = Math.min(1e-8, solverOptions.relativeTolerance ?? 1e-6),
  ) {
    this.reference = new TissueSolver(mesh, {
      ...solverOptions,
      relativeTolerance: columnTolerance,
    });
    // At rest the rotations are the identity: the system of the first step is A₀.
    this.reference.freeMotion();
    this.constrained = this.reference.constrainedDofs();
    this.tets = mesh.tets;
    const rest = new Float64Array(mesh.nodes.length);
    for (let i = 0; i < rest.length; i++) rest[i] = mesh.nodes[i] * METRES_PER_MILLIMETRE;
    ({ restInverse: this.restInverse, volumes: this.volumes } = tetRestData(rest, mesh.tets));
    const nodeCount = mesh.nodes.length / 3;
    this.nodeTetStart = new Uint32Array(nodeCount + 1);
    for (let i = 0; i < mesh.tets.length; i++) this.nodeTetStart[mesh.tets[i] + 1]++;
    for (let node = 0; node < nodeCount; node++) {
      this.nodeTetStart[node + 1] += this.nodeTetStart[node];
    }
    const fill = this.nodeTetStart.slice(0, nodeCount);
    this.nodeTets = new Uint32Array(mesh.tets.length);
    for (let i = 0; i < mesh.tets.length; i++) this.nodeTets[fill[mesh.tets[i]]++] = i >> 2;
    this.slotOf = new Int32Array(nodeCount).fill(-1);
    this.addNodes(Array.from(nodes));
    this.isBuilt = true;
  }

  /** The nodes in the table, in slot order. */
  get nodes(): readonly number[] {
    return this.slotNodes;
  }

  /** Whether a node's columns are in the table. */
  has(node: number): boolean {
    return this.slotOf[node] >= 0;
  }

  /** Adds the nodes not yet in the table (three solves with A₀ each). */
  addNodes(nodes: readonly number[]): void {
    const fresh = [...new Set(nodes)].filter((node) => this.slotOf[node] < 0);
    if (fresh.length === 0) return;
    const oldCount = this.slotNodes.length;
    const newCount = oldCount + fresh.length;
    if (newCount > this.capacity) this.grow(Math.max(newCount, 2 * this.capacity, 16));
    for (const node of fresh) {
      this.slotOf[node] = this.slotNodes.length;
      this.slotNodes.push(node);
    }
    const stride = 3 * this.capacity;
    const dofCount = this.constrained.length;
    const rhs = new Float64Array(dofCount);
    const column = new Float64Array(dofCount);
    const started = monotonicMs();
    for (let s = oldCount; s < newCount; s++) {
      const node = this.slotNodes[s];
      for (let axis = 0; axis < 3; axis++) {
        const col = 3 * s + axis;
        const dof = 3 * node + axis;
        // A fixed or driven unknown takes no impulse: its column of the constrained inverse is 0.
        if (this.constrained[dof]) {
          this.fullColumns[col] = null;
          for (let t = 0; t < newCount; t++) {
            for (let a = 0; a < 3; a++) this.table[(3 * t + a) * stride + col] = 0;
          }
          continue;
        }
        rhs[dof] = 1;
        this.reference.solveSystem(rhs, column);
        rhs[dof] = 0;
        this.stats.columnSolves++;
        this.fullColumns[col] = column.slice();
        for (let t = 0; t < newCount; t++) {
          const base = 3 * this.slotNodes[t];
          for (let a = 0; a < 3; a++) this.table[(3 * t + a) * stride + col] = column[base + a];
        }
      }
    }
    this.stats.solveMs += monotonicMs() - started;
    // Rows of the new slots against the old ones by symmetry; new-against-new averaged.
    for (let s = oldCount; s < newCount; s++) {
      for (let t = 0; t < newCount; t++) {
        for (let a = 0; a < 3; a++) {
          for (let c = 0; c < 3; c++) {
            const upper = (3 * t + a) * stride + 3 * s + c;
            const lower = (3 * s + c) * stride + 3 * t + a;
            if (t < oldCount) {
              this.table[lower] = this.table[upper];
            } else if (t < s || (t === s && a < c)) {
              const mean = 0.5 * (this.table[upper] + this.table[lower]);
              this.table[upper] = mean;
              this.table[lower] = mean;
            }
          }
        }
      }
    }
    this.stats.nodes = newCount;
    if (this.isBuilt) this.stats.extendedNodes += fresh.length;
  }

  /** A₀⁻¹ block between two nodes in the table (row-major 3×3) into out. */
  block(k: number, l: number, out: Float64Array): void {
    const sk = this.slotOf[k];
    const sl = this.slotOf[l];
    if (sk < 0 || sl < 0) throw new RangeError(`Node ${sk < 0 ? k : l} is not in the table.`);
    const stride = 3 * this.capacity;
    for (let a = 0; a < 3; a++) {
      for (let c = 0; c < 3; c++) out[3 * a + c] = this.table[(3 * sk + a) * stride + 3 * sl + c];
    }
  }

  /**
   * W ≈ H·R·A₀⁻¹·Rᵀ·Hᵀ for the rows (row-major m × m), with each node's rotation taken at
   * `positionsM` (3 per node, m). `warp = false` uses R = I (for comparison). Extends the
   * table first for nodes the rows touch that it lacks. `rotationCache` (node → rotation) keeps
   * the rotations between calls at the same positions: a controller that solves one step for
   * many needle poses computes them once.
   */
  compliance(
    rows: readonly ConstraintRow[],
    positionsM: Float64Array,
    warp = true,
    rotationCache?: Map<number, Float64Array>,
  ): Float64Array {
    const m = rows.length;
    const touched: number[] = [];
    for (const row of rows) {
      for (let c = 0; c < 4; c++) if (row.weights[c] !== 0) touched.push(row.nodes[c]);
    }
    this.addNodes(touched);
    const rotations = rotationCache ?? new Map<number, Float64Array>();
    if (warp) {
      for (const node of touched) {
        if (!rotations.has(node)) rotations.set(node, this.nodeRotation(node, positionsM));
      }
    }
    // Each row in the rest frame: a_ik = w_ik·R_kᵀ·u_i, per corner.
    const restRows = new Float64Array(12 * m);
    const slots = new Int32Array(4 * m);
    for (let i = 0; i < m; i++) {
      const row = rows[i];
      const [ux, uy, uz] = row.direction;
      for (let c = 0; c < 4; c++) {
        const weight = row.weights[c];
        slots[4 * i + c] = weight === 0 ? -1 : this.slotOf[row.nodes[c]];
        const r = warp ? rotations.get(row.nodes[c]) : undefined;
        const o = 12 * i + 3 * c;
        if (!r) {
          restRows[o] = weight * ux;
          restRows[o + 1] = weight * uy;
          restRows[o + 2] = weight * uz;
        } else {
          restRows[o] = weight * (r[0] * ux + r[3] * uy + r[6] * uz);
          restRows[o + 1] = weight * (r[1] * ux + r[4] * uy + r[7] * uz);
          restRows[o + 2] = weight * (r[2] * ux + r[5] * uy + r[8] * uz);
        }
      }
    }
    const stride = 3 * this.capacity;
    const table = this.table;
    const w = new Float64Array(m * m);
    for (let i = 0; i < m; i++) {
      for (let j = i; j < m; j++) {
        let sum = 0;
        for (let ci = 0; ci < 4; ci++) {
          const si = slots[4 * i + ci];
          if (si < 0) continue;
          const oi = 12 * i + 3 * ci;
          const a0 = restRows[oi];
          const a1 = restRows[oi + 1];
          const a2 = restRows[oi + 2];
          const r0 = 3 * si * stride;
          for (let cj = 0; cj < 4; cj++) {
            const sj = slots[4 * j + cj];
            if (sj < 0) continue;
            const oj = 12 * j + 3 * cj;
            const b0 = restRows[oj];
            const b1 = restRows[oj + 1];
            const b2 = restRows[oj + 2];
            const p = r0 + 3 * sj;
            sum +=
              a0 * (table[p] * b0 + table[p + 1] * b1 + table[p + 2] * b2) +
              a1 *
                (table[p + stride] * b0 + table[p + stride + 1] * b1 + table[p + stride + 2] * b2) +
              a2 *
                (table[p + 2 * stride] * b0 +
                  table[p + 2 * stride + 1] * b1 +
                  table[p + 2 * stride + 2] * b2);
          }
        }
        w[i * m + j] = sum;
        w[j * m + i] = sum;
      }
    }
    return w;
  }

  /**
   * Δv ≈ A⁻¹·Hᵀ·μ from the table's whole columns, without a solve (μ per row, N·s; out m/s, 3
   * per node, overwritten). Each row's impulse acts on its nodes l; node l's columns give the
   * response everywhere in the rest frame, turned by the rotations: R_i·A₀⁻¹[i, l]·R_lᵀ for the
   * table's nodes i — the same warping as `compliance`, so that H·Δv = W·μ on the rows and the
   * constraint solve's residuals hold — and R_l·A₀⁻¹[i, l]·R_lᵀ elsewhere (the column turned
   * with its source: exact for a rigid rotation, cheap for the whole mesh). The rest of the
   * mismatch with this step's A is a one-step error in the far field, which the next step's
   * free motion, carrying the same impulses as forces, does not repeat (README).
   */
  correction(
    rows: readonly ConstraintRow[],
    impulsesNs: ArrayLike<number>,
    positionsM: Float64Array,
    out: Float64Array,
    warp = true,
    rotationCache?: Map<number, Float64Array>,
  ): void {
    out.fill(0);
    const rotations = rotationCache ?? new Map<number, Float64Array>();
    const rotationOf = (node: number): Float64Array | null => {
      if (!warp) return null;
      let r = rotations.get(node);
      if (!r) {
        r = this.nodeRotation(node, positionsM);
        rotations.set(node, r);
      }
      return r;
    };
    // The force on each touched node, in space.
    const forces = new Map<number, [number, number, number]>();
    rows.forEach((row, j) => {
      const mu = impulsesNs[j];
      if (mu === 0) return;
      for (let c = 0; c < 4; c++) {
        const weight = row.weights[c];
        if (weight === 0) continue;
        const node = row.nodes[c];
        let f = forces.get(node);
        if (!f) {
          f = [0, 0, 0];
          forces.set(node, f);
        }
        for (let a = 0; a < 3; a++) f[a] += weight * mu * row.direction[a];
      }
    });
    this.addNodes([...forces.keys()]);
    const response = new Float64Array(out.length);
    for (const [node, f] of forces) {
      const r = rotationOf(node);
      // g = R_lᵀ·f in the rest frame, then u = Σ_c column_c·g_c.
      const g = r
        ? [
            r[0] * f[0] + r[3] * f[1] + r[6] * f[2],
            r[1] * f[0] + r[4] * f[1] + r[7] * f[2],
            r[2] * f[0] + r[5] * f[1] + r[8] * f[2],
          ]
        : f;
      response.fill(0);
      const slot = this.slotOf[node];
      for (let c = 0; c < 3; c++) {
        const column = this.fullColumns[3 * slot + c];
        const gc = g[c];
        if (!column || gc === 0) continue;
        for (let dof = 0; dof < column.length; dof++) response[dof] += gc * column[dof];
      }
      // Far field turned with the source node; table nodes below.
      if (r) {
        for (let base = 0; base < out.length; base += 3) {
          const x = response[base];
          const y = response[base + 1];
          const z = response[base + 2];
          out[base] += r[0] * x + r[1] * y + r[2] * z;
          out[base + 1] += r[3] * x + r[4] * y + r[5] * z;
          out[base + 2] += r[6] * x + r[7] * y + r[8] * z;
        }
      } else {
        for (let dof = 0; dof < out.length; dof++) out[dof] += response[dof];
      }
      if (r) {
        for (const other of this.slotNodes) {
          const q = rotationOf(other);
          if (!q) continue;
          const base = 3 * other;
          const x = response[base];
          const y = response[base + 1];
          const z = response[base + 2];
          // Replace R_l·u by R_i·u at the table's nodes.
          out[base] += q[0] * x + q[1] * y + q[2] * z - (r[0] * x + r[1] * y + r[2] * z);
          out[base + 1] += q[3] * x + q[4] * y + q[5] * z - (r[3] * x + r[4] * y + r[5] * z);
          out[base + 2] += q[6] * x + q[7] * y + q[8] * z - (r[6] * x + r[7] * y + r[8] * z);
        }
      }
    }
    for (let dof = 0; dof < out.length; dof++) if (this.constrained[dof]) out[dof] = 0;
  }

  /**
   * The rotation of a node (row-major 3×3): the rotation of Σ V_e·R_e over its tets e, R_e the
   * rotation of each tet's deformation gradient F = Ds·Dm⁻¹ at `positionsM`.
   */
  nodeRotation(node: number, positionsM: Float64Array): Float64Array {
    const sum = new Float64Array(9);
    const f = new Float64Array(9);
    const r = new Float64Array(9);
    for (let p = this.nodeTetStart[node]; p < this.nodeTetStart[node + 1]; p++) {
      const tet = this.nodeTets[p];
      const i0 = 3 * this.tets[4 * tet];
      const inverse = this.restInverse;
      const m = 9 * tet;
      for (let i = 0; i < 3; i++) {
        const e1 = positionsM[3 * this.tets[4 * tet + 1] + i] - positionsM[i0 + i];
        const e2 = positionsM[3 * this.tets[4 * tet + 2] + i] - positionsM[i0 + i];
        const e3 = positionsM[3 * this.tets[4 * tet + 3] + i] - positionsM[i0 + i];
        for (let j = 0; j < 3; j++) {
          f[3 * i + j] = e1 * inverse[m + j] + e2 * inverse[m + 3 + j] + e3 * inverse[m + 6 + j];
        }
      }
      rotationOfDeformation(f, r);
      const volume = this.volumes[tet];
      for (let k = 0; k < 9; k++) sum[k] += volume * r[k];
    }
    const out = new Float64Array(9);
    rotationOfDeformation(sum, out);
    return out;
  }

  private grow(capacity: number): void {
    const old = this.table;
    const oldStride = 3 * this.capacity;
    const stride = 3 * capacity;
    this.table = new Float64Array(stride * stride);
    for (let row = 0; row < 3 * this.slotNodes.length; row++) {
      this.table.set(old.subarray(row * oldStride, row * oldStride + oldStride), row * stride);
    }
    this.capacity = capacity;
  }
}
