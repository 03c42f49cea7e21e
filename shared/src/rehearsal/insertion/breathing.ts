/**
 * Breathing for the insertion rehearsal: the diaphragm's side of the liver is driven along the
 * curve of Lujan et al. (A method for incorporating organ motion due to breathing into 3D dose
 * calculations, Med Phys 1999;26:715–720),
 *
 *   z(t) = z0 − b·cos^(2n)(π·t/τ − φ),
 *
 * the rest of the surface is held softly by its surroundings, and the surface under the needle's
 * entry is held stiffly by the abdominal wall, which moves with a fraction of the diaphragm's
 * motion. Defaults and their sources are in this folder's README.
 *
 * Positions in LPS millimetres (+z superior, +y posterior); the boundary conditions handed to
 * the tissue solver are SI, as it wants them.
 */
import type { Vec3 } from '../../geometry/vector';
import type { BoundaryConditions, DrivenNode, SoftAttachment } from '../fem/tissue-solver';
import type { TetMesh } from '../mesh/tet-mesh';
import { checkNumber, checkVec3, refuse } from './insertion-input';

/** Lujan's curve plus where the liver was imaged and an optional front–back part. */
export interface BreathingParameters {
  /** b: superior–inferior excursion of the diaphragm's surface, mm (0 = still). */
  amplitudeMm: number;
  /** τ: period of one breath, s. */
  periodS: number;
  /** n: shape; 1 is a sinusoid, larger n rests longer at exhale. */
  shapeN: number;
  /** φ: phase of the curve, rad (t = φ·τ/π is a peak of inhalation). */
  phaseRad: number;
  /**
   * Anterior–posterior displacement per millimetre of superior–inferior displacement: the liver
   * moves anteriorly (−y in LPS) by this fraction as it moves inferiorly on inhalation.
   */
  anteriorFraction: number;
  /** The breathing state of the image the mesh was built from: zero displacement there. */
  imagedAt: 'exhale' | 'inhale';
}

/**
 * Common-practice defaults (README): 12 mm superior–inferior, a 4 s breath (15 a minute), n = 2,
 * no front–back part, imaged at exhale.
 */
export const DEFAULT_BREATHING: Readonly<BreathingParameters> = Object.freeze({
  amplitudeMm: 12,
  periodS: 4,
  shapeN: 2,
  phaseRad: 0,
  anteriorFraction: 0,
  imagedAt: 'exhale',
});

/** Lujan's z(t) = z0 − b·cos^(2n)(π·t/τ − φ), in the unit of z0 and b. */
export function lujanPosition(
  timeS: number,
  z0: number,
  parameters: Pick<BreathingParameters, 'amplitudeMm' | 'periodS' | 'shapeN' | 'phaseRad'>,
): number {
  const { amplitudeMm: b, periodS: tau, shapeN: n, phaseRad: phi } = parameters;
  const c = Math.cos((Math.PI * timeS) / tau - phi);
  // cos^(2n) as (cos²)^n: defined for any real n ≥ 1, and exact for whole n.
  return z0 - b * Math.pow(c * c, n);
}

/**
 * Where in the breath time t is, as a fraction of the period in [0, 1): 0 at the peak of
 * inhalation (cos^(2n) = 1, the most inferior position), 0.5 in the middle of exhalation's rest
 * (cos = 0, the most superior position).
 */
export function breathingPhase(timeS: number, parameters: BreathingParameters): number {
  const cycles = timeS / parameters.periodS - parameters.phaseRad / Math.PI;
  return cycles - Math.floor(cycles);
}

/** The first time ≥ notBeforeS at breathing phase `phase` (a fraction, as breathingPhase). */
export function timeAtPhase(
  phase: number,
  parameters: BreathingParameters,
  notBeforeS: number,
): number {
  const wait = phase - breathingPhase(notBeforeS, parameters);
  return notBeforeS + (wait - Math.floor(wait)) * parameters.periodS;
}

/**
 * The diaphragm's displacement from the imaged state at time t, mm (LPS): along z by
 * s = z(t) − z_imaged with z0 = 0 (s ≤ 0 when imaged at exhale), along y by
 * anteriorFraction·s, none along x.
 */
export function breathingOffsetMm(timeS: number, parameters: BreathingParameters): Vec3 {
  const imaged = parameters.imagedAt === 'inhale' ? -parameters.amplitudeMm : 0;
  const s = lujanPosition(timeS, 0, parameters) - imaged;
  return [0, parameters.anteriorFraction * s, s];
}

/** Breathing parameters with defaults filled in, checked. */
export function resolveBreathing(
  input: Partial<BreathingParameters> | undefined,
  field = 'breathing',
): BreathingParameters {
  const p = { ...DEFAULT_BREATHING, ...(input ?? {}) };
  checkNumber(p.amplitudeMm, `${field}.amplitudeMm`, 0, 100);
  checkNumber(p.periodS, `${field}.periodS`, 0.5, 60);
  checkNumber(p.shapeN, `${field}.shapeN`, 1, 10);
  checkNumber(p.phaseRad, `${field}.phaseRad`, -1e6, 1e6);
  checkNumber(p.anteriorFraction, `${field}.anteriorFraction`, -1, 1);
  if (p.imagedAt !== 'exhale' && p.imagedAt !== 'inhale') {
    refuse(`${field}.imagedAt`, `${field}.imagedAt must be 'exhale' or 'inhale'.`);
  }
  return p;
}

/** The abdominal wall holding the liver where the needle enters. */
export interface AbdominalWallOptions {
  /** Where the needle's line crosses the liver's surface, LPS mm. */
  entryMm: Vec3;
  /** Surface nodes within this distance of the entry are held by the wall, mm (default 15). */
  radiusMm?: number;
  /** Stiffness per area of surface, Pa per mm of displacement (default 1000). */
  stiffnessPaPerMm?: number;
  /** The wall moves with this fraction of the diaphragm's displacement (default 0.3). */
  motionFraction?: number;
}

/** How the liver is driven and held (all optional). */
export interface BreathingBoundaryOptions {
  /** Lujan's parameters (missing ones from DEFAULT_BREATHING); null = no breathing (b = 0). */
  breathing?: Partial<BreathingParameters> | null;
  /** Smallest z-component of a surface triangle's outward unit normal on the diaphragm (0.5). */
  diaphragmMinNormalZ?: number;
  /** Triangles of the diaphragm have their centroid in this top fraction of the organ's height (0.5). */
  diaphragmUpperFraction?: number;
  /**
   * Stiffness per area of the soft attachments holding the rest of the surface, Pa per mm of
   * displacement (default 50): each node gets k = κ × its share of the surface.
   */
  surroundingStiffnessPaPerMm?: number;
  /** The abdominal wall at the needle's entry, or null for none (the default). */
  wall?: AbdominalWallOptions | null;
  /** From this time on the breath is held (the offset stays at its value then), s; null = never. */
  holdFromS?: number | null;
}

/** The liver's breathing boundary conditions and what they were built from. */
export interface BreathingBoundary {
  /** For the tissue solver (SI): diaphragm driven, wall and surroundings attached. */
  boundary: BoundaryConditions;
  parameters: BreathingParameters;
  /** Driven nodes, ascending. */
  diaphragmNodes: Uint32Array;
  /** Nodes held by the abdominal wall, ascending (empty without a wall). */
  wallNodes: Uint32Array;
  /** Nodes held by the soft surroundings, ascending. */
  surroundingNodes: Uint32Array;
  /** Each node's share of the boundary's area (a third of each triangle), mm². */
  nodeAreasMm2: Float64Array;
  /** The diaphragm's displacement from the imaged state at time t (breath-hold applied), mm. */
  offsetMm(timeS: number): Vec3;
  /** The wall's displacement at time t, mm. */
  wallOffsetMm(timeS: number): Vec3;
}

/** Outward unit normal and area of boundary triangle `face` (mm²). */
function faceNormal(mesh: TetMesh, face: number): { normal: Vec3; areaMm2: number } {
  const { nodes, boundaryFaces } = mesh;
  const a = 3 * boundaryFaces[3 * face];
  const b = 3 * boundaryFaces[3 * face + 1];
  const c = 3 * boundaryFaces[3 * face + 2];
  const u: Vec3 = [nodes[b] - nodes[a], nodes[b + 1] - nodes[a + 1], nodes[b + 2] - nodes[a + 2]];
  const v: Vec3 = [nodes[c] - nodes[a], nodes[c + 1] - nodes[a + 1], nodes[c + 2] - nodes[a + 2]];
  const n: Vec3 = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
  const length = Math.hypot(n[0], n[1], n[2]);
  if (!(length > 0)) return { normal: [0, 0, 0], areaMm2: 0 };
  return { normal: [n[0] / length, n[1] / length, n[2] / length], areaMm2: length / 2 };
}

/** Each node's share of the boundary's area: a third of each triangle it is a corner of, mm². */
export function surfaceNodeAreasMm2(mesh: TetMesh): Float64Array {
  const areas = new Float64Array(mesh.nodes.length / 3);
  for (let face = 0; face < mesh.boundaryFaces.length / 3; face++) {
    const { areaMm2 } = faceNormal(mesh, face);
    for (let corner = 0; corner < 3; corner++) {
      areas[mesh.boundaryFaces[3 * face + corner]] += areaMm2 / 3;
    }
  }
  return areas;
}

/**
 * The nodes of the diaphragm's side: corners of boundary triangles whose outward normal has a
 * z-component of at least `minNormalZ` and whose centroid lies in the top `upperFraction` of the
 * organ's superior–inferior extent. Ascending.
 */
export function diaphragmNodes(mesh: TetMesh, minNormalZ = 0.5, upperFraction = 0.5): Uint32Array {
  const { nodes, boundaryFaces } = mesh;
  let zLow = Infinity;
  let zHigh = -Infinity;
  for (let node = 0; node < nodes.length / 3; node++) {
    zLow = Math.min(zLow, nodes[3 * node + 2]);
    zHigh = Math.max(zHigh, nodes[3 * node + 2]);
  }
  const zFloor = zHigh - upperFraction * (zHigh - zLow);
  const chosen = new Set<number>();
  for (let face = 0; face < boundaryFaces.length / 3; face++) {
    const { normal } = faceNormal(mesh, face);
    if (normal[2] < minNormalZ) continue;
    let zCentroid = 0;
    for (let corner = 0; corner < 3; corner++) {
      zCentroid += nodes[3 * boundaryFaces[3 * face + corner] + 2] / 3;
    }
    if (zCentroid < zFloor) continue;
    for (let corner = 0; corner < 3; corner++) chosen.add(boundaryFaces[3 * face + corner]);
  }
  return Uint32Array.from([...chosen].sort((a, b) => a - b));
}

/**
 * Builds the breathing boundary conditions of a liver mesh: the diaphragm's nodes driven along
 * the breathing offset, the wall's nodes attached stiffly to targets moving with a fraction of
 * it, the other surface nodes attached softly to where they were imaged. Refuses bad options
 * (EngineRefusal) and a mesh without a diaphragm side.
 */
export function breathingBoundary(
  mesh: TetMesh,
  options: BreathingBoundaryOptions = {},
): BreathingBoundary {
  const parameters =
    options.breathing === null
      ? resolveBreathing({ amplitudeMm: 0 })
      : resolveBreathing(options.breathing);
  const minNormalZ = checkNumber(options.diaphragmMinNormalZ ?? 0.5, 'diaphragmMinNormalZ', 0, 1);
  const upperFraction = checkNumber(
    options.diaphragmUpperFraction ?? 0.5,
    'diaphragmUpperFraction',
    0.01,
    1,
  );
  const kappa = checkNumber(
    options.surroundingStiffnessPaPerMm ?? 50,
    'surroundingStiffnessPaPerMm',
    0,
    1e6,
  );
  const holdFromS = options.holdFromS ?? null;
  if (holdFromS !== null) checkNumber(holdFromS, 'holdFromS', -1e9, 1e9);
  const wall = options.wall ?? null;
  let wallEntry: Vec3 | null = null;
  let wallRadius = 15;
  let wallKappa = 1000;
  let wallFraction = 0.3;
  if (wall !== null) {
    wallEntry = checkVec3(wall.entryMm, 'wall.entryMm');
    wallRadius = checkNumber(wall.radiusMm ?? wallRadius, 'wall.radiusMm', 0, 200);
    wallKappa = checkNumber(wall.stiffnessPaPerMm ?? wallKappa, 'wall.stiffnessPaPerMm', 0, 1e7);
    wallFraction = checkNumber(wall.motionFraction ?? wallFraction, 'wall.motionFraction', 0, 1);
  }

  const diaphragm = diaphragmNodes(mesh, minNormalZ, upperFraction);
  if (diaphragm.length === 0) {
    refuse(
      'diaphragmMinNormalZ',
      'No boundary triangle faces superiorly in the upper part of the organ: nothing to drive. ' +
        'Lower diaphragmMinNormalZ or raise diaphragmUpperFraction.',
    );
  }
  const areas = surfaceNodeAreasMm2(mesh);
  const nodeCount = mesh.nodes.length / 3;
  const role = new Uint8Array(nodeCount); // 0 inner, 1 diaphragm, 2 wall, 3 surroundings
  for (const node of diaphragm) role[node] = 1;
  const wallNodes: number[] = [];
  if (wallEntry !== null) {
    let nearest = -1;
    let nearestMm = Infinity;
    for (let node = 0; node < nodeCount; node++) {
      if (areas[node] === 0 || role[node] === 1) continue;
      const d = Math.hypot(
        mesh.nodes[3 * node] - wallEntry[0],
        mesh.nodes[3 * node + 1] - wallEntry[1],
        mesh.nodes[3 * node + 2] - wallEntry[2],
      );
      if (d <= wallRadius) wallNodes.push(node);
      if (d < nearestMm) [nearest, nearestMm] = [node, d];
    }
    // A radius smaller than the mesh's cells still holds the nearest surface node.
    if (wallNodes.length === 0 && nearest >= 0) wallNodes.push(nearest);
    for (const node of wallNodes) role[node] = 2;
  }
  const surroundings: number[] = [];
  for (let node = 0; node < nodeCount; node++) {
    if (areas[node] > 0 && role[node] === 0) {
      role[node] = 3;
      surroundings.push(node);
    }
  }

  const offsetMm = (timeS: number): Vec3 =>
    breathingOffsetMm(holdFromS !== null && timeS > holdFromS ? holdFromS : timeS, parameters);
  const wallOffsetMm = (timeS: number): Vec3 => {
    const offset = offsetMm(timeS);
    return [wallFraction * offset[0], wallFraction * offset[1], wallFraction * offset[2]];
  };
  const restM = (node: number): Vec3 => [
    mesh.nodes[3 * node] / 1000,
    mesh.nodes[3 * node + 1] / 1000,
    mesh.nodes[3 * node + 2] / 1000,
  ];
  const driven: DrivenNode[] = [...diaphragm].map((node) => {
    const rest = restM(node);
    return {
      node,
      positionM: (t: number) => {
        const offset = offsetMm(t);
        return [rest[0] + offset[0] / 1000, rest[1] + offset[1] / 1000, rest[2] + offset[2] / 1000];
      },
    };
  });
  // κ in Pa/mm is 10⁻⁶ N/mm³; times an area in mm² that is 10⁻⁶ N/mm = 10⁻³ N/m.
  const attachments: SoftAttachment[] = surroundings.map((node) => ({
    node,
    stiffnessNPerM: kappa * areas[node] * 1e-3,
    targetM: restM(node),
  }));
  for (const node of wallNodes) {
    const rest = restM(node);
    attachments.push({
      node,
      stiffnessNPerM: wallKappa * areas[node] * 1e-3,
      targetM: (t: number) => {
        const offset = wallOffsetMm(t);
        return [rest[0] + offset[0] / 1000, rest[1] + offset[1] / 1000, rest[2] + offset[2] / 1000];
      },
    });
  }
  return {
    boundary: { driven, attachments },
    parameters,
    diaphragmNodes: diaphragm,
    wallNodes: Uint32Array.from(wallNodes.sort((a, b) => a - b)),
    surroundingNodes: Uint32Array.from(surroundings),
    nodeAreasMm2: areas,
    offsetMm,
    wallOffsetMm,
  };
}
