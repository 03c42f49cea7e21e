/**
 * Carries the local margins the engine measured at the tumour's surface voxels (LPS mm) onto
 * the vertices of the tumour's display surface: each vertex takes the value of its nearest
 * sample. The samples are binned on a uniform grid, and the search grows shell by shell until
 * no unsearched bin can hold a nearer sample, so the answer is the exact nearest neighbour.
 */

/**
 * The value of the nearest sample to each point (x y z per point, LPS mm); NaN for every point
 * when there is no sample, and for points farther than `maxDistanceMm` from all of them.
 */
export function nearestSampleValues(
  points: Float32Array,
  samplePoints: Float32Array,
  sampleValues: Float32Array,
  options: { binMm?: number; maxDistanceMm?: number } = {},
): Float32Array {
  const pointCount = points.length / 3;
  const sampleCount = Math.min(samplePoints.length / 3, sampleValues.length);
  const values = new Float32Array(pointCount).fill(Number.NaN);
  if (sampleCount === 0) return values;
  const binMm = options.binMm ?? 3;
  const maxDistanceMm = options.maxDistanceMm ?? Infinity;

  const low = [Infinity, Infinity, Infinity];
  const high = [-Infinity, -Infinity, -Infinity];
  for (let s = 0; s < sampleCount; s++) {
    for (let c = 0; c < 3; c++) {
      low[c] = Math.min(low[c], samplePoints[3 * s + c]);
      high[c] = Math.max(high[c], samplePoints[3 * s + c]);
    }
  }
  const size = low.map((value, c) => Math.max(1, Math.floor((high[c] - value) / binMm) + 1));
  const binOf = (value: number, c: number) =>
    Math.min(size[c] - 1, Math.max(0, Math.floor((value - low[c]) / binMm)));
  // Counting sort of the samples by bin: `starts[b]…starts[b + 1]` index `order`.
  const binCount = size[0] * size[1] * size[2];
  const starts = new Uint32Array(binCount + 1);
  const binIndex = new Uint32Array(sampleCount);
  for (let s = 0; s < sampleCount; s++) {
    const b =
      binOf(samplePoints[3 * s], 0) +
      size[0] * (binOf(samplePoints[3 * s + 1], 1) + size[1] * binOf(samplePoints[3 * s + 2], 2));
    binIndex[s] = b;
    starts[b + 1]++;
  }
  for (let b = 0; b < binCount; b++) starts[b + 1] += starts[b];
  const filled = starts.slice(0, binCount);
  const order = new Uint32Array(sampleCount);
  for (let s = 0; s < sampleCount; s++) order[filled[binIndex[s]]++] = s;

  const maxShell = Math.max(size[0], size[1], size[2]);
  for (let p = 0; p < pointCount; p++) {
    const x = points[3 * p];
    const y = points[3 * p + 1];
    const z = points[3 * p + 2];
    const home = [binOf(x, 0), binOf(y, 1), binOf(z, 2)];
    // How far outside the binned box the point lies: shells must first reach it.
    const outside = Math.hypot(
      Math.max(0, low[0] - x, x - high[0]),
      Math.max(0, low[1] - y, y - high[1]),
      Math.max(0, low[2] - z, z - high[2]),
    );
    let bestSquared = Infinity;
    let best = -1;
    for (let shell = 0; shell <= maxShell; shell++) {
      // Every sample in an unsearched bin (shell ≥ this one) lies at least (shell − 1) bins away.
      const reach = Math.max(outside, (shell - 1) * binMm);
      if (best >= 0 && reach * reach > bestSquared) break;
      for (let k = home[2] - shell; k <= home[2] + shell; k++) {
        if (k < 0 || k >= size[2]) continue;
        for (let j = home[1] - shell; j <= home[1] + shell; j++) {
          if (j < 0 || j >= size[1]) continue;
          const isFace = Math.abs(k - home[2]) === shell || Math.abs(j - home[1]) === shell;
          for (let i = home[0] - shell; i <= home[0] + shell; i++) {
            if (i < 0 || i >= size[0]) continue;
            // Only the shell's surface: the inside was searched before.
            if (!isFace && Math.abs(i - home[0]) !== shell) continue;
            const b = i + size[0] * (j + size[1] * k);
            for (let at = starts[b]; at < starts[b + 1]; at++) {
              const s = order[at];
              const dx = samplePoints[3 * s] - x;
              const dy = samplePoints[3 * s + 1] - y;
              const dz = samplePoints[3 * s + 2] - z;
              const squared = dx * dx + dy * dy + dz * dz;
              if (squared < bestSquared) {
                bestSquared = squared;
                best = s;
              }
            }
          }
        }
      }
    }
    if (best >= 0 && bestSquared <= maxDistanceMm * maxDistanceMm) values[p] = sampleValues[best];
  }
  return values;
}
