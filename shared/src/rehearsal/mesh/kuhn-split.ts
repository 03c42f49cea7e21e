/**
 * The Kuhn (Freudenthal) triangulation of a box into 6 tetrahedra along its main diagonal
 * (Freudenthal, Ann Math 1942;43:580; Kuhn, "Some combinatorial lemmas in topology", IBM J Res
 * Dev 1960;4:518 — both from memory).
 *
 * Number the corners of a cell by bits: corner c lies at (c & 1, (c >> 1) & 1, (c >> 2) & 1)
 * in units of the cell's edges along i, j and k. For each permutation (a, b, c) of the three
 * axes, the tet 0 → e_a → e_a + e_b → (1, 1, 1) walks from corner 0 to corner 7 one axis at a
 * time. The 6 tets tile the cell (every point of the cell orders its three coordinates one way),
 * and each square face of the cell is cut along the diagonal through the face's lowest corner.
 * That diagonal is the same on the two cells sharing the face — one cell's face x = 1 is the
 * other's face x = 0, both cut from (·, 0, 0) to (·, 1, 1) — so when every cell of a lattice is
 * split the same way, neighbours meet triangle to triangle (a conforming mesh; checked in
 * kuhn-split.spec.ts).
 */

/** Corners (bit-numbered as above) of the 6 tets of a cell, each positively oriented. */
export const KUHN_CELL_TETS: readonly (readonly [number, number, number, number])[] =
  kuhnCellTets();

function kuhnCellTets(): [number, number, number, number][] {
  const permutations: [number, number, number][] = [
    [0, 1, 2],
    [1, 2, 0],
    [2, 0, 1],
    [0, 2, 1],
    [2, 1, 0],
    [1, 0, 2],
  ];
  return permutations.map(([a, b], index) => {
    const first = 1 << a;
    const second = first | (1 << b);
    // det(e_a, e_a + e_b, e_a + e_b + e_c) = det(e_a, e_b, e_c): the sign of the permutation.
    // The last three above are odd, so two of their corners swap.
    const isEven = index < 3;
    return isEven ? [0, first, second, 7] : [0, second, first, 7];
  });
}

/** Offset (0 or 1 along i, j, k) of a bit-numbered cell corner. */
export function cellCornerOffset(corner: number): [number, number, number] {
  return [corner & 1, (corner >> 1) & 1, (corner >> 2) & 1];
}
