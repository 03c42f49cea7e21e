/**
 * Sparse symmetric matrices over a tetrahedral mesh in compressed sparse row form by 3×3 node
 * blocks (block CSR): row i lists the nodes j sharing a tetrahedron with node i (i included),
 * each entry a row-major 3×3 block. Both triangles are stored, so a product is one pass over
 * the rows. The pattern is built once per mesh; the values are re-filled every step, each tet
 * adding its 16 blocks at slots found here once.
 */

/** The sparsity pattern of a mesh's node-block matrices. */
export interface BlockPattern {
  readonly nodeCount: number;
  /** Row i's blocks are slots rowStart[i] … rowStart[i + 1] − 1. */
  readonly rowStart: Int32Array;
  /** Column node of each slot, increasing within a row. */
  readonly columns: Int32Array;
  /** Slot of the diagonal block (i, i) of each row. */
  readonly diagonalSlot: Int32Array;
  /** For tet t and corners a, b (0…3): the slot of block (node a, node b) at 16·t + 4·a + b. */
  readonly tetSlots: Int32Array;
}

/** Builds the pattern of the node-block matrix of the tets (4 node indices each). */
export function buildBlockPattern(nodeCount: number, tets: Uint32Array): BlockPattern {
  const tetCount = tets.length / 4;
  // Tets around each node (CSR), then each row's neighbours sorted and made unique.
  const tetStart = new Int32Array(nodeCount + 1);
  for (let index = 0; index < tets.length; index++) tetStart[tets[index] + 1]++;
  for (let node = 0; node < nodeCount; node++) tetStart[node + 1] += tetStart[node];
  const tetsOfNode = new Int32Array(tets.length);
  const fill = tetStart.slice(0, nodeCount);
  for (let tet = 0; tet < tetCount; tet++) {
    for (let corner = 0; corner < 4; corner++) tetsOfNode[fill[tets[4 * tet + corner]]++] = tet;
  }
  const rowStart = new Int32Array(nodeCount + 1);
  const rows: Int32Array[] = new Array<Int32Array>(nodeCount);
  let scratch = new Int32Array(64);
  for (let node = 0; node < nodeCount; node++) {
    const count = 4 * (tetStart[node + 1] - tetStart[node]);
    if (scratch.length < count) scratch = new Int32Array(2 * count);
    let n = 0;
    for (let slot = tetStart[node]; slot < tetStart[node + 1]; slot++) {
      const tet = tetsOfNode[slot];
      for (let corner = 0; corner < 4; corner++) scratch[n++] = tets[4 * tet + corner];
    }
    const sorted = scratch.subarray(0, n).sort();
    let unique = 0;
    for (let index = 0; index < n; index++) {
      if (index === 0 || sorted[index] !== sorted[index - 1]) sorted[unique++] = sorted[index];
    }
    rows[node] = sorted.slice(0, unique);
    rowStart[node + 1] = rowStart[node] + unique;
  }
  const columns = new Int32Array(rowStart[nodeCount]);
  const diagonalSlot = new Int32Array(nodeCount).fill(-1);
  for (let node = 0; node < nodeCount; node++) {
    const row = rows[node];
    columns.set(row, rowStart[node]);
    const position = findSlot(row, node);
    if (position >= 0) diagonalSlot[node] = rowStart[node] + position;
  }
  const tetSlots = new Int32Array(16 * tetCount);
  for (let tet = 0; tet < tetCount; tet++) {
    for (let a = 0; a < 4; a++) {
      const row = tets[4 * tet + a];
      const within = columns.subarray(rowStart[row], rowStart[row + 1]);
      for (let b = 0; b < 4; b++) {
        tetSlots[16 * tet + 4 * a + b] = rowStart[row] + findSlot(within, tets[4 * tet + b]);
      }
    }
  }
  return { nodeCount, rowStart, columns, diagonalSlot, tetSlots };
}

/** Index of `column` in the sorted `row`, or −1. */
function findSlot(row: Int32Array, column: number): number {
  let low = 0;
  let high = row.length - 1;
  while (low <= high) {
    const middle = (low + high) >> 1;
    if (row[middle] < column) low = middle + 1;
    else if (row[middle] > column) high = middle - 1;
    else return middle;
  }
  return -1;
}

/** y = A·x for the block matrix with `values` (9 per slot); x and y have 3 per node. */
export function blockMultiply(
  pattern: BlockPattern,
  values: Float64Array,
  x: Float64Array,
  y: Float64Array,
): void {
  const { rowStart, columns, nodeCount } = pattern;
  for (let row = 0; row < nodeCount; row++) {
    let y0 = 0;
    let y1 = 0;
    let y2 = 0;
    for (let slot = rowStart[row]; slot < rowStart[row + 1]; slot++) {
      const j = 3 * columns[slot];
      const b = 9 * slot;
      const x0 = x[j];
      const x1 = x[j + 1];
      const x2 = x[j + 2];
      y0 += values[b] * x0 + values[b + 1] * x1 + values[b + 2] * x2;
      y1 += values[b + 3] * x0 + values[b + 4] * x1 + values[b + 5] * x2;
      y2 += values[b + 6] * x0 + values[b + 7] * x1 + values[b + 8] * x2;
    }
    y[3 * row] = y0;
    y[3 * row + 1] = y1;
    y[3 * row + 2] = y2;
  }
}
