/**
 * The invented organs: where they lie (LPS, millimetres: +x patient left, +y posterior, +z head),
 * their label values, and what each label stands for. The liver lies on the patient's right, at
 * negative x. Every position and size here is our own invention, copied from no atlas or dataset.
 */
import type { AnalyticShape } from './solids';
import type { StructureKind } from './structure-kinds';
import { TISSUE_HU } from './tissues';
import { WALL_DEPTHS_MM } from './torso';
import type { Vec3 } from './vector';
import {
  BILE_DUCT,
  HEPATIC_ARTERY,
  HEPATIC_VEIN,
  PORTAL_VEIN,
  type VesselKind,
} from './vessel-tree';

/** A structure of the label map. */
export interface LabelledStructure {
  labelValue: number;
  kind: StructureKind;
  /** Unique, kebab-case. */
  name: string;
  description: string;
  /** Nominal HU of its main tissue, before noise. */
  nominalHu: number;
  /** Set when the structure is painted whole as this shape, so its volume has a closed form. */
  analyticShape?: AnalyticShape;
}

export interface TumourDesign {
  labelValue: number;
  name: string;
  /** Couinaud segment, by construction relative to the invented vessels. */
  couinaudSegment: string;
  centreLps: Vec3;
  radiusMm: number;
}

/** Values of the label map, one a structure; 0 is background (nothing labelled). */
export const LABEL_VALUES = {
  liver: 1,
  tumourSegment8: 2,
  tumourSegment6: 3,
  portalVein: 4,
  hepaticVein: 5,
  hepaticArtery: 6,
  bileDuct: 7,
  gallbladder: 8,
  rightKidney: 9,
  leftKidney: 10,
  colon: 11,
  smallBowel: 12,
  stomach: 13,
  lung: 14,
  heart: 15,
  bone: 16,
  skin: 17,
} as const;

export const TUMOURS: TumourDesign[] = [
  {
    labelValue: LABEL_VALUES.tumourSegment8,
    name: 'tumour-segment-8',
    couinaudSegment: 'VIII',
    centreLps: [-32, -16, 22],
    radiusMm: 12,
  },
  {
    labelValue: LABEL_VALUES.tumourSegment6,
    name: 'tumour-segment-6',
    couinaudSegment: 'VI',
    centreLps: [-38, 18, -2],
    radiusMm: 9,
  },
];

export const GALLBLADDER: AnalyticShape = {
  type: 'ellipsoid',
  centreLps: [-22, -28, -14],
  semiAxesMm: [8, 9, 16],
};
export const RIGHT_KIDNEY: AnalyticShape = {
  type: 'ellipsoid',
  centreLps: [-34, 24, -42],
  semiAxesMm: [12, 10, 24],
};
export const LEFT_KIDNEY: AnalyticShape = {
  type: 'ellipsoid',
  centreLps: [34, 24, -34],
  semiAxesMm: [12, 10, 24],
};
export const STOMACH: AnalyticShape = {
  type: 'ellipsoid',
  centreLps: [34, -6, 10],
  semiAxesMm: [14, 18, 22],
};

/** Thickness of the stomach's and colon's wall, millimetres. */
export const GUT_WALL_MM = 2.5;

export const COLON_CENTRE_LINE: Vec3[] = [
  [-44, -6, -84],
  [-44, -10, -56],
  [-36, -22, -40],
  [-18, -30, -44],
  [6, -32, -48],
  [30, -28, -52],
];
export const COLON_RADIUS_MM = 10;

export const SMALL_BOWEL_LOOPS: Vec3[][] = [
  [
    [-8, -20, -84],
    [-2, -26, -72],
    [10, -20, -64],
    [22, -24, -72],
    [30, -16, -84],
  ],
  [
    [14, -10, -84],
    [24, -8, -70],
    [36, -12, -62],
  ],
];
export const SMALL_BOWEL_RADIUS_MM = 7;

export const VESSEL_TREES = [
  { tree: BILE_DUCT, labelValue: LABEL_VALUES.bileDuct, hu: TISSUE_HU.bile },
  { tree: HEPATIC_ARTERY, labelValue: LABEL_VALUES.hepaticArtery, hu: TISSUE_HU.hepaticArtery },
  { tree: PORTAL_VEIN, labelValue: LABEL_VALUES.portalVein, hu: TISSUE_HU.portalVein },
  { tree: HEPATIC_VEIN, labelValue: LABEL_VALUES.hepaticVein, hu: TISSUE_HU.hepaticVein },
];

const VESSEL_DESCRIPTIONS: Record<VesselKind, string> = {
  'portal-vein': 'Portal vein: trunk, right and left portal veins, segmental branches.',
  'hepatic-vein': 'Hepatic veins: common trunk, right, middle and left veins, one tributary.',
  'hepatic-artery': 'Proper, right and left hepatic arteries.',
  'bile-duct': 'Common hepatic duct, right and left hepatic ducts.',
};

/** Every labelled structure, with its kind, nominal HU and closed-form shape if any. */
export function labelledStructures(): LabelledStructure[] {
  return [
    {
      labelValue: LABEL_VALUES.liver,
      kind: 'liver',
      name: 'liver',
      description:
        'Union of three ellipsoids clipped by the body wall and the diaphragm, less what ' +
        'later layers cover (vena cava, gallbladder, kidney, vessels, tumours).',
      nominalHu: TISSUE_HU.liver,
    },
    ...TUMOURS.map((tumour) => ({
      labelValue: tumour.labelValue,
      kind: 'tumour' as const,
      name: tumour.name,
      description: `Hypo-attenuating sphere in Couinaud segment ${tumour.couinaudSegment}.`,
      nominalHu: TISSUE_HU.tumour,
      analyticShape: {
        type: 'sphere' as const,
        centreLps: tumour.centreLps,
        radiusMm: tumour.radiusMm,
      },
    })),
    ...VESSEL_TREES.map(({ tree, labelValue, hu }) => ({
      labelValue,
      kind: tree.kind,
      name: tree.kind,
      description: VESSEL_DESCRIPTIONS[tree.kind],
      nominalHu: hu,
    })),
    {
      labelValue: LABEL_VALUES.gallbladder,
      kind: 'gallbladder',
      name: 'gallbladder',
      description: 'Bile-filled ellipsoid under the liver.',
      nominalHu: TISSUE_HU.bile,
      analyticShape: GALLBLADDER,
    },
    {
      labelValue: LABEL_VALUES.rightKidney,
      kind: 'kidney',
      name: 'right-kidney',
      description: 'Enhancing ellipsoid below and behind the liver.',
      nominalHu: TISSUE_HU.kidney,
      analyticShape: RIGHT_KIDNEY,
    },
    {
      labelValue: LABEL_VALUES.leftKidney,
      kind: 'kidney',
      name: 'left-kidney',
      description: 'Enhancing ellipsoid on the left.',
      nominalHu: TISSUE_HU.kidney,
      analyticShape: LEFT_KIDNEY,
    },
    {
      labelValue: LABEL_VALUES.colon,
      kind: 'bowel',
      name: 'colon',
      description: 'Hepatic flexure and transverse colon: a gas-filled tube with a thin wall.',
      nominalHu: TISSUE_HU.air,
    },
    {
      labelValue: LABEL_VALUES.smallBowel,
      kind: 'bowel',
      name: 'small-bowel',
      description: 'Two collapsed loops in the lower slices.',
      nominalHu: TISSUE_HU.smallBowel,
    },
    {
      labelValue: LABEL_VALUES.stomach,
      kind: 'stomach',
      name: 'stomach',
      description: 'Ellipsoid with a wall, fluid content and a little gas in front.',
      nominalHu: TISSUE_HU.gastricFluid,
      analyticShape: STOMACH,
    },
    {
      labelValue: LABEL_VALUES.lung,
      kind: 'lung',
      name: 'lung-bases',
      description: 'Both lung bases above the diaphragm, deepest behind, in the top slices.',
      nominalHu: TISSUE_HU.lung,
    },
    {
      labelValue: LABEL_VALUES.heart,
      kind: 'heart',
      name: 'heart',
      description: 'The lower heart on the diaphragm, in the top slices.',
      nominalHu: TISSUE_HU.heart,
    },
    {
      labelValue: LABEL_VALUES.bone,
      kind: 'bone',
      name: 'bone',
      description: 'Four pairs of ribs (curved bars) and a vertebral column.',
      nominalHu: TISSUE_HU.rib,
    },
    {
      labelValue: LABEL_VALUES.skin,
      kind: 'skin',
      name: 'skin',
      description: `The body outline, ${WALL_DEPTHS_MM.fat} mm deep.`,
      nominalHu: TISSUE_HU.skin,
    },
  ];
}

/** Tissues painted without a label, with their nominal HU. */
export const UNLABELLED_TISSUES: { name: string; nominalHu: number }[] = [
  { name: 'subcutaneous and intra-abdominal fat', nominalHu: TISSUE_HU.fat },
  {
    name: 'muscle of the body wall, paraspinal muscles, diaphragm',
    nominalHu: TISSUE_HU.muscle,
  },
  { name: 'aorta', nominalHu: TISSUE_HU.aorta },
  { name: 'inferior vena cava', nominalHu: TISSUE_HU.inferiorVenaCava },
  { name: 'spinal canal', nominalHu: TISSUE_HU.cerebrospinalFluid },
  { name: 'air outside the body', nominalHu: TISSUE_HU.air },
];
