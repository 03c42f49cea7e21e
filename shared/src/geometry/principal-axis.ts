/**
 * The principal axis of a cloud of points: the unit eigenvector of the largest eigenvalue of
 * its 3 × 3 covariance matrix, found by cyclic Jacobi rotations (Golub & Van Loan, Matrix
 * Computations, §8.5 — from memory), which converge for any symmetric matrix.
 */
import type { Vec3 } from './vector';

/**
 * Unit eigenvector (sign arbitrary) of the largest eigenvalue of the symmetric matrix given
 * by its entries xx, yy, zz, xy, xz, yz, with the eigenvalues in decreasing order.
 */
export function principalAxis(
  xx: number,
  yy: number,
  zz: number,
  xy: number,
  xz: number,
  yz: number,
): { axis: Vec3; eigenvalues: Vec3 } {
  const a = [
    [xx, xy, xz],
    [xy, yy, yz],
    [xz, yz, zz],
  ];
  const v = [
    [1, 0, 0],
    [0, 1, 0],
    [0, 0, 1],
  ];
  for (let sweep = 0; sweep < 50; sweep++) {
    const offDiagonal = Math.abs(a[0][1]) + Math.abs(a[0][2]) + Math.abs(a[1][2]);
    const scale = Math.abs(a[0][0]) + Math.abs(a[1][1]) + Math.abs(a[2][2]);
    if (offDiagonal <= 1e-15 * Math.max(scale, 1e-300)) break;
    for (const [p, q] of [
      [0, 1],
      [0, 2],
      [1, 2],
    ]) {
      if (a[p][q] === 0) continue;
      // The rotation that zeroes a[p][q]: tan 2θ = 2a_pq / (a_qq − a_pp).
      const theta = (a[q][q] - a[p][p]) / (2 * a[p][q]);
      const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
      const c = 1 / Math.sqrt(t * t + 1);
      const s = t * c;
      for (let k = 0; k < 3; k++) {
        const akp = a[k][p];
        const akq = a[k][q];
        a[k][p] = c * akp - s * akq;
        a[k][q] = s * akp + c * akq;
      }
      for (let k = 0; k < 3; k++) {
        const apk = a[p][k];
        const aqk = a[q][k];
        a[p][k] = c * apk - s * aqk;
        a[q][k] = s * apk + c * aqk;
      }
      for (let k = 0; k < 3; k++) {
        const vkp = v[k][p];
        const vkq = v[k][q];
        v[k][p] = c * vkp - s * vkq;
        v[k][q] = s * vkp + c * vkq;
      }
    }
  }
  const order = [0, 1, 2].sort((p, q) => a[q][q] - a[p][p]);
  const best = order[0];
  const axis: Vec3 = [v[0][best], v[1][best], v[2][best]];
  const length = Math.hypot(axis[0], axis[1], axis[2]);
  return {
    axis: axis.map((value) => value / length) as Vec3,
    eigenvalues: order.map((index) => a[index][index]) as Vec3,
  };
}
