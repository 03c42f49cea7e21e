/**
 * Points carried by the mesh: a point (a needle tip, a tumour's centre, a vessel's centre line)
 * is located in the tet that holds it and stored by its barycentric weights, so that it follows
 * the tet wherever the solver moves the nodes — the usual embedding of linear finite elements
 * (common practice). Positions LPS, millimetres.
 */
import type { Vec3 } from '../../geometry/vector';
import type { TetMesh } from './tet-mesh';

/** A point inside a tet, by barycentric weights of its 4 nodes (summing to 1). */
export interface Embedding {
  tet: number;
  weights: [number, number, number, number];
}

/**
 * How far below 0 a weight may fall for the point to count as inside, no unit: a point that far
 * outside a face (relative to the tet's size) is on it up to rounding, and its weights are
 * clamped to the tet.
 */
export const EMBEDDING_TOLERANCE = 1e-9;

/** Slack of the buckets' sides, in buckets: far above rounding, far below a tet. */
const BOX_SLACK = 1e-6;

/**
 * The tet holding each point and its weights there; null for a point outside the mesh. A point
 * on a face or node shared by several tets is given to the one it lies deepest in (the largest
 * smallest weight), the first such tet on a tie.
 */
export function embedPoints(mesh: TetMesh, pointsLps: readonly Vec3[]): (Embedding | null)[] {
  if (pointsLps.length === 0 || mesh.tets.length === 0) return pointsLps.map(() => null);
  const locator = new TetLocator(mesh);
  return pointsLps.map((point) => locator.locate(point));
}

/**
 * Where an embedded point is when the mesh's nodes are at `nodes` (3 per node, LPS mm; the
 * current, deformed positions): the weighted sum of its tet's nodes.
 */
export function embeddedPosition(nodes: Float64Array, mesh: TetMesh, embedding: Embedding): Vec3 {
  const position: Vec3 = [0, 0, 0];
  for (let v = 0; v < 4; v++) {
    const node = mesh.tets[4 * embedding.tet + v];
    const weight = embedding.weights[v];
    position[0] += weight * nodes[3 * node];
    position[1] += weight * nodes[3 * node + 1];
    position[2] += weight * nodes[3 * node + 2];
  }
  return position;
}

/**
 * A uniform grid of buckets over the mesh's bounding box, each listing the tets whose bounding
 * boxes overlap it, and per tet the inverse of its edge matrix for the barycentric weights.
 */
class TetLocator {
  private readonly low: Vec3 = [Infinity, Infinity, Infinity];
  private readonly bucketMm: number;
  private readonly counts: [number, number, number];
  private readonly bucketStart: Uint32Array;
  private readonly bucketTets: Uint32Array;
  /** Per tet: the inverse of [p1 − p0, p2 − p0, p3 − p0] (row-major, 9 numbers). */
  private readonly inverses: Float64Array;

  constructor(private readonly mesh: TetMesh) {
    const { nodes, tets } = mesh;
    const tetCount = tets.length / 4;
    const high: Vec3 = [-Infinity, -Infinity, -Infinity];
    for (let p = 0; p < nodes.length; p += 3) {
      for (let axis = 0; axis < 3; axis++) {
        this.low[axis] = Math.min(this.low[axis], nodes[p + axis]);
        high[axis] = Math.max(high[axis], nodes[p + axis]);
      }
    }
    // Buckets about a cell wide hold a few dozen tets; never more buckets than 8 per tet.
    const extent = [0, 1, 2].map((axis) => Math.max(high[axis] - this.low[axis], 1e-9));
    const volume = extent[0] * extent[1] * extent[2];
    this.bucketMm = Math.max(mesh.cellMm > 0 ? mesh.cellMm : 0, Math.cbrt(volume / (8 * tetCount)));
    this.counts = extent.map((size) => Math.max(1, Math.ceil(size / this.bucketMm))) as [
      number,
      number,
      number,
    ];

    const box = new Int32Array(6 * tetCount);
    const bucketTotal = this.counts[0] * this.counts[1] * this.counts[2];
    this.bucketStart = new Uint32Array(bucketTotal + 1);
    this.inverses = new Float64Array(9 * tetCount);
    for (let tet = 0; tet < tetCount; tet++) {
      this.storeInverse(tet);
      for (let axis = 0; axis < 3; axis++) {
        let min = Infinity;
        let max = -Infinity;
        for (let v = 0; v < 4; v++) {
          const value = nodes[3 * tets[4 * tet + v] + axis];
          min = Math.min(min, value);
          max = Math.max(max, value);
        }
        // Widened a little, so that a point outside a tet by rounding finds it.
        box[6 * tet + axis] = this.bucketOf(min - BOX_SLACK * this.bucketMm, axis);
        box[6 * tet + 3 + axis] = this.bucketOf(max + BOX_SLACK * this.bucketMm, axis);
      }
      this.forEachBucket(box, tet, (bucket) => this.bucketStart[bucket + 1]++);
    }
    for (let bucket = 0; bucket < bucketTotal; bucket++) {
      this.bucketStart[bucket + 1] += this.bucketStart[bucket];
    }
    const fill = this.bucketStart.slice(0, bucketTotal);
    this.bucketTets = new Uint32Array(this.bucketStart[bucketTotal]);
    for (let tet = 0; tet < tetCount; tet++) {
      this.forEachBucket(box, tet, (bucket) => (this.bucketTets[fill[bucket]++] = tet));
    }
  }

  locate(point: Readonly<Vec3>): Embedding | null {
    const cell = [0, 1, 2].map((axis) => {
      const offset = (point[axis] - this.low[axis]) / this.bucketMm;
      // Points within the slack of the box's sides belong to the outermost buckets.
      if (offset < -BOX_SLACK || offset > this.counts[axis] + BOX_SLACK) return -1;
      return Math.min(Math.max(Math.floor(offset), 0), this.counts[axis] - 1);
    });
    if (cell.includes(-1)) return null;
    const bucket = cell[0] + this.counts[0] * (cell[1] + this.counts[1] * cell[2]);
    let best: Embedding | null = null;
    let bestLeast = -Infinity;
    for (let p = this.bucketStart[bucket]; p < this.bucketStart[bucket + 1]; p++) {
      const tet = this.bucketTets[p];
      const weights = this.weightsIn(tet, point);
      const least = Math.min(...weights);
      if (least >= -EMBEDDING_TOLERANCE && least > bestLeast) {
        bestLeast = least;
        best = { tet, weights };
      }
    }
    if (best === null || bestLeast >= 0) return best;
    // Clamp a point on the boundary up to rounding onto its tet.
    const clamped = best.weights.map((weight) => Math.max(weight, 0));
    const sum = clamped[0] + clamped[1] + clamped[2] + clamped[3];
    return {
      tet: best.tet,
      weights: clamped.map((weight) => weight / sum) as Embedding['weights'],
    };
  }

  /** Barycentric weights of a point in a tet: λ1..3 = T⁻¹ (x − p0), λ0 = 1 − λ1 − λ2 − λ3. */
  private weightsIn(tet: number, point: Readonly<Vec3>): [number, number, number, number] {
    const { nodes, tets } = this.mesh;
    const origin = 3 * tets[4 * tet];
    const dx = point[0] - nodes[origin];
    const dy = point[1] - nodes[origin + 1];
    const dz = point[2] - nodes[origin + 2];
    const m = this.inverses;
    const q = 9 * tet;
    const w1 = m[q] * dx + m[q + 1] * dy + m[q + 2] * dz;
    const w2 = m[q + 3] * dx + m[q + 4] * dy + m[q + 5] * dz;
    const w3 = m[q + 6] * dx + m[q + 7] * dy + m[q + 8] * dz;
    return [1 - w1 - w2 - w3, w1, w2, w3];
  }

  /** The inverse of the tet's edge matrix, by its adjugate over its determinant. */
  private storeInverse(tet: number): void {
    const { nodes, tets } = this.mesh;
    const origin = 3 * tets[4 * tet];
    // Columns a, b, c of the edge matrix: the edges from node 0 to nodes 1, 2 and 3.
    const edge = (v: number, axis: number) =>
      nodes[3 * tets[4 * tet + v] + axis] - nodes[origin + axis];
    const [ax, ay, az] = [edge(1, 0), edge(1, 1), edge(1, 2)];
    const [bx, by, bz] = [edge(2, 0), edge(2, 1), edge(2, 2)];
    const [cx, cy, cz] = [edge(3, 0), edge(3, 1), edge(3, 2)];
    const determinant =
      ax * (by * cz - bz * cy) - bx * (ay * cz - az * cy) + cx * (ay * bz - az * by);
    const m = this.inverses;
    const q = 9 * tet;
    // Rows of the inverse are (b × c, c × a, a × b) / det.
    m[q] = (by * cz - bz * cy) / determinant;
    m[q + 1] = (bz * cx - bx * cz) / determinant;
    m[q + 2] = (bx * cy - by * cx) / determinant;
    m[q + 3] = (cy * az - cz * ay) / determinant;
    m[q + 4] = (cz * ax - cx * az) / determinant;
    m[q + 5] = (cx * ay - cy * ax) / determinant;
    m[q + 6] = (ay * bz - az * by) / determinant;
    m[q + 7] = (az * bx - ax * bz) / determinant;
    m[q + 8] = (ax * by - ay * bx) / determinant;
  }

  private bucketOf(value: number, axis: number): number {
    const index = Math.floor((value - this.low[axis]) / this.bucketMm);
    return Math.min(Math.max(index, 0), this.counts[axis] - 1);
  }

  private forEachBucket(box: Int32Array, tet: number, visit: (bucket: number) => void): void {
    const b = 6 * tet;
    for (let k = box[b + 2]; k <= box[b + 5]; k++) {
      for (let j = box[b + 1]; j <= box[b + 4]; j++) {
        for (let i = box[b]; i <= box[b + 3]; i++) {
          visit(i + this.counts[0] * (j + this.counts[1] * k));
        }
      }
    }
  }
}
