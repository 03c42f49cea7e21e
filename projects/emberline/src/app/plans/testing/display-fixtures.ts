import {
  encodeAssessmentDisplay,
  type AssessmentDisplay,
  type Vec3,
  type ZoneModel,
} from '@emberline/shared';

/**
 * A made-up display body: a ball-shaped zone of `zoneRadiusMm` (voxel mask on a 1 mm grid
 * along LPS) and a ball-shaped tumour of `tumourRadiusMm` at the same centre, its surface
 * sampled evenly (a Fibonacci lattice, common practice) with the local margin of a sphere in a
 * sphere: the difference of the radii.
 */
export function ballDisplay(
  centreLps: Vec3,
  zoneRadiusMm: number,
  tumourRadiusMm: number,
  model: ZoneModel = 'table',
): AssessmentDisplay {
  const half = Math.ceil(zoneRadiusMm) + 2;
  const size = 2 * half + 1;
  const mask = new Uint8Array(size * size * size);
  for (let k = 0; k < size; k++) {
    for (let j = 0; j < size; j++) {
      for (let i = 0; i < size; i++) {
        const inside = Math.hypot(i - half, j - half, k - half) <= zoneRadiusMm;
        mask[i + size * (j + size * k)] = inside ? 1 : 0;
      }
    }
  }
  const count = 2000;
  const points = new Float32Array(count * 3);
  const margins = new Float32Array(count);
  const golden = Math.PI * (3 - Math.sqrt(5));
  for (let index = 0; index < count; index++) {
    const z = 1 - (2 * (index + 0.5)) / count;
    const radius = Math.sqrt(1 - z * z);
    const angle = golden * index;
    points[index * 3] = centreLps[0] + tumourRadiusMm * radius * Math.cos(angle);
    points[index * 3 + 1] = centreLps[1] + tumourRadiusMm * radius * Math.sin(angle);
    points[index * 3 + 2] = centreLps[2] + tumourRadiusMm * z;
    margins[index] = zoneRadiusMm - tumourRadiusMm;
  }
  return {
    zones: [
      {
        model,
        geometry: {
          dimensions: [size, size, size],
          spacingMm: [1, 1, 1],
          originLps: [centreLps[0] - half, centreLps[1] - half, centreLps[2] - half],
          direction: [
            [1, 0, 0],
            [0, 1, 0],
            [0, 0, 1],
          ],
        },
        mask,
      },
    ],
    margins: [{ structureId: 'tumour-1', model, pointsLps: points, marginMm: margins }],
  };
}

/** The display as the server sends it: its encoded bytes in an ArrayBuffer of their own. */
export function displayBody(display: AssessmentDisplay): ArrayBuffer {
  const bytes = encodeAssessmentDisplay(display);
  return bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer;
}
