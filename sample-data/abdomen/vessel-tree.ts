/**
 * The invented intrahepatic vessel trees: tubes of known radii along polyline centre-lines, LPS
 * millimetres. Each branch starts where its parent's centre-line passes (the branch point).
 * The layout is our own, drawn so that the two tumours have vessels near them at distances the
 * manifest states (a heat-sink case for the first), not copied from any atlas or dataset.
 */
import { distanceToSegment, type Vec3 } from './vector';

export interface VesselBranch {
  /** Unique within its tree. */
  name: string;
  /** The branch it leaves, or null for the trunk. */
  parent: string | null;
  radiusMm: number;
  /** Centre-line, LPS, millimetres; the first point lies on the parent's centre-line. */
  centreLineLps: Vec3[];
}

export type VesselKind = 'portal-vein' | 'hepatic-vein' | 'hepatic-artery' | 'bile-duct';

export interface VesselTree {
  kind: VesselKind;
  branches: VesselBranch[];
}

/** Portal vein: trunk 6 mm, right and left portal veins 3 mm, segmental branches 1.5 mm. */
export const PORTAL_VEIN: VesselTree = {
  kind: 'portal-vein',
  branches: [
    {
      name: 'trunk',
      parent: null,
      radiusMm: 6,
      centreLineLps: [
        [-2, -4, -34],
        [-6, -5, -16],
        [-12, -6, 4],
      ],
    },
    {
      name: 'right',
      parent: 'trunk',
      radiusMm: 3,
      centreLineLps: [
        [-12, -6, 4],
        [-20, -5, 6],
        [-27, -4, 7],
      ],
    },
    {
      name: 'right-anterior-segment-5',
      parent: 'right',
      radiusMm: 1.5,
      centreLineLps: [
        [-27, -4, 7],
        [-30, -16, 5],
        [-32, -26, 1],
      ],
    },
    {
      name: 'right-anterior-segment-8',
      parent: 'right',
      radiusMm: 1.5,
      centreLineLps: [
        [-27, -4, 7],
        [-26, -2, 18],
        [-23, -3, 30],
      ],
    },
    {
      name: 'right-posterior-segment-7',
      parent: 'right',
      radiusMm: 1.5,
      centreLineLps: [
        [-27, -4, 7],
        [-34, 10, 14],
        [-44, 18, 16],
      ],
    },
    {
      name: 'right-posterior-segment-6',
      parent: 'right-posterior-segment-7',
      radiusMm: 1.5,
      centreLineLps: [
        [-34, 10, 14],
        [-30, 26, 8],
        [-30, 32, -8],
      ],
    },
    {
      name: 'left',
      parent: 'trunk',
      radiusMm: 3,
      centreLineLps: [
        [-12, -6, 4],
        [-4, -12, 6],
        [4, -18, 8],
      ],
    },
    {
      name: 'left-lateral-segments-2-3',
      parent: 'left',
      radiusMm: 1.5,
      centreLineLps: [
        [4, -18, 8],
        [14, -24, 10],
        [24, -28, 12],
      ],
    },
    {
      name: 'left-medial-segment-4',
      parent: 'left',
      radiusMm: 1.5,
      centreLineLps: [
        [4, -18, 8],
        [-2, -28, 12],
        [-6, -34, 14],
      ],
    },
  ],
};

/** Hepatic veins: a 6 mm common trunk at the vena cava, 3 mm veins, 1.5 mm tributaries. */
export const HEPATIC_VEIN: VesselTree = {
  kind: 'hepatic-vein',
  branches: [
    {
      name: 'trunk',
      parent: null,
      radiusMm: 6,
      centreLineLps: [
        [-16, 8, 44],
        [-19, 1, 39],
      ],
    },
    {
      name: 'right',
      parent: 'trunk',
      radiusMm: 3,
      centreLineLps: [
        [-19, 1, 39],
        [-32, 4, 26],
        [-44, 6, 12],
        [-48, 3, -10],
      ],
    },
    {
      name: 'right-posterior-tributary',
      parent: 'right',
      radiusMm: 1.5,
      centreLineLps: [
        [-32, 4, 26],
        [-40, 14, 28],
        [-46, 20, 26],
      ],
    },
    {
      name: 'middle',
      parent: 'trunk',
      radiusMm: 3,
      centreLineLps: [
        [-19, 1, 39],
        [-14, -10, 30],
        [-11, -22, 16],
      ],
    },
    {
      name: 'left',
      parent: 'trunk',
      radiusMm: 3,
      centreLineLps: [
        [-19, 1, 39],
        [-8, -6, 30],
        [4, -12, 22],
        [16, -20, 18],
      ],
    },
  ],
};

/** Hepatic artery: the proper hepatic artery 2 mm, right and left hepatic arteries 1.5 mm. */
export const HEPATIC_ARTERY: VesselTree = {
  kind: 'hepatic-artery',
  branches: [
    {
      name: 'proper',
      parent: null,
      radiusMm: 2,
      centreLineLps: [
        [8, -22, -34],
        [2, -22, -16],
        [-2, -20, -10],
      ],
    },
    {
      name: 'right',
      parent: 'proper',
      radiusMm: 1.5,
      centreLineLps: [
        [-2, -20, -10],
        [-10, -15, -8],
        [-18, -14, -4],
        [-24, -12, 2],
      ],
    },
    {
      name: 'left',
      parent: 'proper',
      radiusMm: 1.5,
      centreLineLps: [
        [-2, -20, -10],
        [2, -26, 0],
        [6, -30, 8],
      ],
    },
  ],
};

/** Bile ducts: the common hepatic duct 2.5 mm, right and left hepatic ducts 1.5 mm. */
export const BILE_DUCT: VesselTree = {
  kind: 'bile-duct',
  branches: [
    {
      name: 'common-hepatic',
      parent: null,
      radiusMm: 2.5,
      centreLineLps: [
        [-8, -22, -34],
        [-11, -22, -16],
        [-14, -22, -4],
      ],
    },
    {
      name: 'right-hepatic',
      parent: 'common-hepatic',
      radiusMm: 1.5,
      centreLineLps: [
        [-14, -22, -4],
        [-20, -20, 2],
        [-24, -19, 6],
      ],
    },
    {
      name: 'left-hepatic',
      parent: 'common-hepatic',
      radiusMm: 1.5,
      centreLineLps: [
        [-14, -22, -4],
        [-8, -24, 6],
        [-4, -20, 14],
      ],
    },
  ],
};

/** Length of a polyline, millimetres. */
export function centreLineLengthMm(centreLineLps: readonly Vec3[]): number {
  let lengthMm = 0;
  for (let index = 1; index < centreLineLps.length; index++) {
    const [a, b] = [centreLineLps[index - 1], centreLineLps[index]];
    lengthMm += Math.hypot(b[0] - a[0], b[1] - a[1], b[2] - a[2]);
  }
  return lengthMm;
}

/**
 * Nominal volume of a tree, millilitres: Σ π·r²·L over its branches, cylinders without their
 * round ends. Branches overlap at their branch points, so the painted tubes hold somewhat
 * less and somewhat more (the round ends) than this; it has no closed form.
 */
export function nominalTreeVolumeMl(tree: Readonly<VesselTree>): number {
  const cubicMm = tree.branches.reduce(
    (sum, branch) =>
      sum + Math.PI * branch.radiusMm ** 2 * centreLineLengthMm(branch.centreLineLps),
    0,
  );
  return cubicMm / 1000;
}

/**
 * The branch of a tree whose wall is nearest a sphere's surface, and that surface-to-surface
 * distance (millimetres, negative when they overlap): min over segments of
 * |centre − segment| − sphere radius − branch radius. Exact for tubes of round section.
 */
export function nearestBranchToSphere(
  tree: Readonly<VesselTree>,
  centreLps: Readonly<Vec3>,
  sphereRadiusMm: number,
): { branch: string; surfaceDistanceMm: number } {
  let nearest = { branch: '', surfaceDistanceMm: Infinity };
  for (const branch of tree.branches) {
    for (let index = 1; index < branch.centreLineLps.length; index++) {
      const axisDistanceMm = distanceToSegment(
        centreLps,
        branch.centreLineLps[index - 1],
        branch.centreLineLps[index],
      );
      const surfaceDistanceMm = axisDistanceMm - sphereRadiusMm - branch.radiusMm;
      if (surfaceDistanceMm < nearest.surfaceDistanceMm) {
        nearest = { branch: branch.name, surfaceDistanceMm };
      }
    }
  }
  return nearest;
}
