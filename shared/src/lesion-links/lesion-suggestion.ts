/**
 * A SUGGESTION ONLY of which lesion of the case's Summary each tumour structure of a label map
 * shows. The image does not say which Couinaud segment a tumour lies in (no segment map is
 * imported), so the suggestion leans on size and uses a coarse position rule only to break
 * near-ties; the presenting physician confirms or changes every link before it names anything
 * in a plan comparison or a verdict. Positions LPS, millimetres (+x patient left, +y posterior,
 * +z head; DICOM PS3.3 C.7.6.2.1.1).
 *
 * Size: the tumour's size is the larger of its equivalent-sphere diameter (6V/π)^⅓ and the
 * longest side of its bounding box. Both are lower bounds of its largest diameter — the first by
 * the isodiametric inequality (no solid of volume V has a smaller diameter than the ball of
 * volume V), the second because two voxels that far apart belong to it — and both equal it for
 * a sphere, which is how a lesion's size is usually given (its largest diameter, common practice).
 * The size mismatch is |D − s| / max(D, s): 0 for equal sizes, 0.5 when one is twice the other.
 *
 * Position: the tumour's centre is placed in thirds of the liver's LPS bounding box along each
 * axis (right/middle/left, anterior/middle/posterior, inferior/middle/superior), and compared
 * with where each segment lies in Couinaud's scheme (Couinaud C, Le foie: études anatomiques et
 * chirurgicales, Masson 1957; Bismuth H, World J Surg 1982;6:3–9 — the table below is written
 * from memory and deliberately lenient): the right liver (V–VIII) lies to the patient's right,
 * II/III form the left lateral section, IV lies between; VI/VII are posterior, V/VIII anterior;
 * VII/VIII and II lie superior, V/VI and III inferior; the caudate lobe (I) lies central and
 * posterior. Livers vary and tumours deform them, so position only ever decides between lesions
 * whose sizes fit about equally well.
 */
import type { CouinaudSegment } from '../api/cases';
import type { Vec3 } from '../geometry/vector';

/** One tumour structure as measured on its label map (`measureLabels`). */
export interface SuggestionTumour {
  id: string;
  /** Volume of its voxels, cubic millimetres. */
  volumeMm3: number;
  /** Sides of its voxels' bounding box along the grid axes, millimetres. */
  extentMm: Readonly<Vec3>;
  /** Centre of its voxels, LPS, millimetres. */
  centroidLps: Readonly<Vec3>;
}

/** One lesion of the case's Summary that a tumour may be linked to. */
export interface SuggestionLesion {
  id: string;
  segment: CouinaudSegment;
  /** Largest diameter as entered on the Summary, millimetres. */
  diameterMm: number;
}

/** The liver's voxels' axis-aligned bounding box, LPS, millimetres. */
export interface LiverBox {
  min: Readonly<Vec3>;
  max: Readonly<Vec3>;
}

/** A lesion of more than twice or less than half a tumour's size is never suggested for it. */
export const MAXIMUM_SIZE_MISMATCH = 0.5;
/**
 * Weight of the position mismatch (0…1, the share of the three axes where the tumour's third
 * does not fit the segment) in a pair's cost: position can only reverse a size preference when
 * the two size mismatches differ by less than this (a fifth of a lesion's size is within what
 * a measurement on another slice or phase gives; common practice, a judgement).
 */
export const POSITION_WEIGHT = 0.15;
/** Cost of leaving a tumour without a suggestion: more than any pair that may be suggested. */
const UNLINKED_COST = 1;
/** Largest number of lesions for the exact assignment; beyond, pairs are taken greedily. */
const EXACT_ASSIGNMENT_MAX_LESIONS = 14;

/** Third of an axis of the liver box: 0 low (right, anterior, inferior) … 2 high. */
export type Third = 0 | 1 | 2;

/**
 * Where each segment may lie, by thirds of the liver box along x (0 patient right … 2 left),
 * y (0 anterior … 2 posterior) and z (0 inferior … 2 superior). From memory of Couinaud's
 * scheme (see the top of this file); lenient: two thirds wherever the segment may reach.
 */
export const SEGMENT_THIRDS: Readonly<Record<CouinaudSegment, readonly (readonly Third[])[]>> = {
  I: [[1], [1, 2], [1, 2]],
  II: [[2], [1, 2], [1, 2]],
  III: [[2], [0, 1], [0, 1]],
  IV: [
    [1, 2],
    [0, 1],
    [0, 1, 2],
  ],
  V: [
    [0, 1],
    [0, 1],
    [0, 1],
  ],
  VI: [[0], [1, 2], [0, 1]],
  VII: [[0], [1, 2], [1, 2]],
  VIII: [
    [0, 1],
    [0, 1],
    [1, 2],
  ],
};

/**
 * The tumour's size for comparison with a lesion's largest diameter, millimetres: the larger of
 * its equivalent-sphere diameter (6V/π)^⅓ and its bounding box's longest side.
 */
export function tumourSizeMm(tumour: Pick<SuggestionTumour, 'volumeMm3' | 'extentMm'>): number {
  const equivalentDiameterMm = Math.cbrt((6 * tumour.volumeMm3) / Math.PI);
  return Math.max(equivalentDiameterMm, ...tumour.extentMm);
}

/** |D − s| / max(D, s): 0 for equal sizes, 0.5 when one is twice the other. */
export function sizeMismatch(lesionDiameterMm: number, tumourSizeMm: number): number {
  const larger = Math.max(lesionDiameterMm, tumourSizeMm);
  return larger > 0 ? Math.abs(lesionDiameterMm - tumourSizeMm) / larger : 0;
}

/** The third of the liver box (LPS) a point falls in along x, y and z; outside counts as 0 or 2. */
export function thirdsInLiver(pointLps: Readonly<Vec3>, liver: LiverBox): [Third, Third, Third] {
  const third = (axis: number): Third => {
    const span = liver.max[axis] - liver.min[axis];
    if (!(span > 0)) return 1;
    const fraction = (pointLps[axis] - liver.min[axis]) / span;
    return fraction < 1 / 3 ? 0 : fraction < 2 / 3 ? 1 : 2;
  };
  return [third(0), third(1), third(2)];
}

/** Share of the three axes (0, ⅓, ⅔ or 1) where the point's third does not fit the segment. */
export function positionMismatch(
  segment: CouinaudSegment,
  pointLps: Readonly<Vec3>,
  liver: LiverBox,
): number {
  const thirds = thirdsInLiver(pointLps, liver);
  const expected = SEGMENT_THIRDS[segment];
  let misses = 0;
  for (let axis = 0; axis < 3; axis++) {
    if (!expected[axis].includes(thirds[axis])) misses++;
  }
  return misses / 3;
}

/**
 * The suggested lesion of each tumour (tumour id → lesion id, or null for none): a one-to-one
 * assignment minimising the summed cost, where a pair costs its size mismatch plus
 * POSITION_WEIGHT × its position mismatch (position left out without a liver box), a pair whose
 * size mismatch exceeds MAXIMUM_SIZE_MISMATCH is never made, and a tumour left without a lesion
 * costs more than any pair. Equal costs keep the order given (tumours, then lesions).
 * A SUGGESTION ONLY: see the top of this file.
 */
export function suggestLesionLinks(input: {
  tumours: readonly SuggestionTumour[];
  lesions: readonly SuggestionLesion[];
  liver: LiverBox | null;
}): Map<string, string | null> {
  const { tumours, lesions, liver } = input;
  const costs = tumours.map((tumour) => {
    const sizeMm = tumourSizeMm(tumour);
    return lesions.map((lesion) => {
      const size = sizeMismatch(lesion.diameterMm, sizeMm);
      if (!(size <= MAXIMUM_SIZE_MISMATCH)) return null;
      const position = liver ? positionMismatch(lesion.segment, tumour.centroidLps, liver) : 0;
      return size + POSITION_WEIGHT * position;
    });
  });
  const chosen =
    lesions.length <= EXACT_ASSIGNMENT_MAX_LESIONS
      ? exactAssignment(costs, lesions.length)
      : greedyAssignment(costs);
  return new Map(
    tumours.map((tumour, index) => {
      const lesion = chosen[index];
      return [tumour.id, lesion === null ? null : lesions[lesion].id];
    }),
  );
}

/** Lesion index per tumour (or null) of least total cost, by dynamic programming over subsets. */
function exactAssignment(
  costs: readonly (number | null)[][],
  lesionCount: number,
): (number | null)[] {
  const memo = new Map<number, { cost: number; choice: number | null }>();
  const best = (tumour: number, used: number): { cost: number; choice: number | null } => {
    if (tumour === costs.length) return { cost: 0, choice: null };
    const key = tumour * 2 ** lesionCount + used;
    const known = memo.get(key);
    if (known) return known;
    let answer = {
      cost: UNLINKED_COST + best(tumour + 1, used).cost,
      choice: null as number | null,
    };
    costs[tumour].forEach((cost, lesion) => {
      if (cost === null || (used & (1 << lesion)) !== 0) return;
      const total = cost + best(tumour + 1, used | (1 << lesion)).cost;
      // A small tolerance so that sums equal up to rounding keep the earlier choice.
      if (total < answer.cost - 1e-12) answer = { cost: total, choice: lesion };
    });
    memo.set(key, answer);
    return answer;
  };
  const chosen: (number | null)[] = [];
  let used = 0;
  for (let tumour = 0; tumour < costs.length; tumour++) {
    const { choice } = best(tumour, used);
    chosen.push(choice);
    if (choice !== null) used |= 1 << choice;
  }
  return chosen;
}

/** Pairs taken cheapest first, each tumour and lesion at most once (many lesions only). */
function greedyAssignment(costs: readonly (number | null)[][]): (number | null)[] {
  const pairs: { tumour: number; lesion: number; cost: number }[] = [];
  costs.forEach((row, tumour) =>
    row.forEach((cost, lesion) => {
      if (cost !== null) pairs.push({ tumour, lesion, cost });
    }),
  );
  pairs.sort((a, b) => a.cost - b.cost || a.tumour - b.tumour || a.lesion - b.lesion);
  const chosen: (number | null)[] = costs.map(() => null);
  const taken = new Set<number>();
  for (const pair of pairs) {
    if (chosen[pair.tumour] !== null || taken.has(pair.lesion)) continue;
    chosen[pair.tumour] = pair.lesion;
    taken.add(pair.lesion);
  }
  return chosen;
}
