/**
 * The invented abdomen as analytic solids in patient space (LPS, millimetres: +x patient left,
 * +y posterior, +z head), painted in order, later layers over earlier ones. The liver lies on
 * the patient's right, that is at negative x. The organs' places and labels are in organs.ts.
 */
import { ribs } from './ribs';
import {
  difference,
  ellipsoid,
  ellipticCylinder,
  intersection,
  region,
  solidOf,
  tubePieces,
  union,
  type AnalyticShape,
  type Solid,
} from './solids';
import {
  COLON_CENTRE_LINE,
  COLON_RADIUS_MM,
  GALLBLADDER,
  GUT_WALL_MM,
  LABEL_VALUES,
  LEFT_KIDNEY,
  RIGHT_KIDNEY,
  SMALL_BOWEL_LOOPS,
  SMALL_BOWEL_RADIUS_MM,
  STOMACH,
  TUMOURS,
  UNLABELLED_TISSUES,
  VESSEL_TREES,
  labelledStructures,
  type LabelledStructure,
  type TumourDesign,
} from './organs';
import { TISSUE_HU } from './tissues';
import {
  DIAPHRAGM_THICKNESS_MM,
  WALL_DEPTHS_MM,
  Z_EXTENT_MM,
  bodyCrossSection,
  diaphragmTopZMm,
} from './torso';
import type { VesselTree } from './vessel-tree';

/** One coat of paint: every voxel whose centre lies in one of the pieces gets `hu` and label. */
export interface Layer {
  name: string;
  pieces: Solid[];
  hu: number;
  /** The label map's value for these voxels; 0 for tissue without a label (fat, muscle…). */
  labelValue: number;
}

export interface Phantom {
  layers: Layer[];
  structures: LabelledStructure[];
  tumours: TumourDesign[];
  vesselTrees: { tree: VesselTree; labelValue: number; hu: number }[];
  /** Tissues painted without a label, with their nominal HU. */
  unlabelledTissues: { name: string; nominalHu: number }[];
}

/** The whole invented abdomen: layers in painting order and what the labels stand for. */
export function buildPhantom(): Phantom {
  const cavity = bodyCrossSection(WALL_DEPTHS_MM.cavity);
  const aboveDiaphragm = intersection(
    cavity,
    region(cavity.boundsMm, (x, y, z) => z > diaphragmTopZMm(x, y)),
  );
  const diaphragmMuscle = intersection(
    cavity,
    region(cavity.boundsMm, (x, y, z) => {
      const topZMm = diaphragmTopZMm(x, y);
      return z <= topZMm && z > topZMm - DIAPHRAGM_THICKNESS_MM;
    }),
  );
  const belowDiaphragm = region(
    cavity.boundsMm,
    (x, y, z) => z <= diaphragmTopZMm(x, y) - DIAPHRAGM_THICKNESS_MM,
  );
  // The posterior mediastinum, before the spine, holds no lung.
  const mediastinum = region(cavity.boundsMm, (x, y) => Math.abs(x) < 14 && y > -4);

  const liver = intersection(
    union(
      ellipsoid([-28, 2, 15], [32, 44, 38]),
      ellipsoid([-6, -12, 16], [22, 22, 18]),
      ellipsoid([10, -22, 14], [24, 16, 16]),
    ),
    bodyCrossSection(WALL_DEPTHS_MM.cavity + 1),
    belowDiaphragm,
  );

  const gutLayers = (name: string, labelValue: number, shape: AnalyticShape): Layer[] => {
    if (shape.type !== 'ellipsoid') throw new Error(`${name}: an ellipsoid is expected`);
    const [a, b, c] = shape.semiAxesMm;
    const lumen = ellipsoid(shape.centreLps, [a - GUT_WALL_MM, b - GUT_WALL_MM, c - GUT_WALL_MM]);
    // Gas rises to the front (−y) of a patient lying on the back.
    const gasBelowYMm = shape.centreLps[1] - b + 8;
    const gas = intersection(
      lumen,
      region(lumen.boundsMm, (_x, y) => y < gasBelowYMm),
    );
    return [
      { name: `${name} wall`, pieces: [solidOf(shape)], hu: TISSUE_HU.bowelWall, labelValue },
      { name: `${name} fluid`, pieces: [lumen], hu: TISSUE_HU.gastricFluid, labelValue },
      { name: `${name} gas`, pieces: [gas], hu: TISSUE_HU.air, labelValue },
    ];
  };

  const layers: Layer[] = [
    {
      name: 'skin',
      pieces: [bodyCrossSection(0)],
      hu: TISSUE_HU.skin,
      labelValue: LABEL_VALUES.skin,
    },
    {
      name: 'subcutaneous fat',
      pieces: [bodyCrossSection(WALL_DEPTHS_MM.fat)],
      hu: TISSUE_HU.fat,
      labelValue: 0,
    },
    {
      name: 'muscle of the body wall',
      pieces: [bodyCrossSection(WALL_DEPTHS_MM.muscle)],
      hu: TISSUE_HU.muscle,
      labelValue: 0,
    },
    { name: 'fat of the cavity', pieces: [cavity], hu: TISSUE_HU.fat, labelValue: 0 },
    {
      name: 'lung bases',
      pieces: [difference(aboveDiaphragm, mediastinum)],
      hu: TISSUE_HU.lung,
      labelValue: LABEL_VALUES.lung,
    },
    { name: 'diaphragm', pieces: [diaphragmMuscle], hu: TISSUE_HU.muscle, labelValue: 0 },
    {
      name: 'heart',
      pieces: [intersection(ellipsoid([8, -14, 54], [26, 20, 22]), aboveDiaphragm)],
      hu: TISSUE_HU.heart,
      labelValue: LABEL_VALUES.heart,
    },
    {
      name: 'paraspinal muscles',
      pieces: [-24, 24].map((xMm) => ellipticCylinder(xMm, 46, 12, 8, -Z_EXTENT_MM, Z_EXTENT_MM)),
      hu: TISSUE_HU.muscle,
      labelValue: 0,
    },
    {
      name: 'vertebral cortex and arch',
      pieces: [
        ellipticCylinder(0, 30, 12, 12, -Z_EXTENT_MM, Z_EXTENT_MM),
        ellipticCylinder(0, 47, 8, 8, -Z_EXTENT_MM, Z_EXTENT_MM),
      ],
      hu: TISSUE_HU.corticalBone,
      labelValue: LABEL_VALUES.bone,
    },
    {
      name: 'vertebral marrow',
      pieces: [ellipticCylinder(0, 30, 10, 10, -Z_EXTENT_MM, Z_EXTENT_MM)],
      hu: TISSUE_HU.cancellousBone,
      labelValue: LABEL_VALUES.bone,
    },
    {
      name: 'spinal canal',
      pieces: [ellipticCylinder(0, 47, 5, 5, -Z_EXTENT_MM, Z_EXTENT_MM)],
      hu: TISSUE_HU.cerebrospinalFluid,
      labelValue: 0,
    },
    {
      name: 'ribs',
      pieces: ribs().flatMap((rib) => tubePieces(rib.centreLineLps, rib.radiusMm)),
      hu: TISSUE_HU.rib,
      labelValue: LABEL_VALUES.bone,
    },
    {
      name: 'aorta',
      pieces: [ellipticCylinder(12, 12, 8, 8, -Z_EXTENT_MM, Z_EXTENT_MM)],
      hu: TISSUE_HU.aorta,
      labelValue: 0,
    },
    { name: 'liver', pieces: [liver], hu: TISSUE_HU.liver, labelValue: LABEL_VALUES.liver },
    {
      name: 'inferior vena cava',
      pieces: [ellipticCylinder(-16, 10, 8, 7, -1000, 50)],
      hu: TISSUE_HU.inferiorVenaCava,
      labelValue: 0,
    },
    ...gutLayers('stomach', LABEL_VALUES.stomach, STOMACH),
    {
      name: 'right kidney',
      pieces: [solidOf(RIGHT_KIDNEY)],
      hu: TISSUE_HU.kidney,
      labelValue: LABEL_VALUES.rightKidney,
    },
    {
      name: 'left kidney',
      pieces: [solidOf(LEFT_KIDNEY)],
      hu: TISSUE_HU.kidney,
      labelValue: LABEL_VALUES.leftKidney,
    },
    {
      name: 'gallbladder',
      pieces: [solidOf(GALLBLADDER)],
      hu: TISSUE_HU.bile,
      labelValue: LABEL_VALUES.gallbladder,
    },
    {
      name: 'colon wall',
      pieces: tubePieces(COLON_CENTRE_LINE, COLON_RADIUS_MM),
      hu: TISSUE_HU.bowelWall,
      labelValue: LABEL_VALUES.colon,
    },
    {
      name: 'colon gas',
      pieces: tubePieces(COLON_CENTRE_LINE, COLON_RADIUS_MM - GUT_WALL_MM),
      hu: TISSUE_HU.air,
      labelValue: LABEL_VALUES.colon,
    },
    {
      name: 'small bowel',
      pieces: SMALL_BOWEL_LOOPS.flatMap((loop) => tubePieces(loop, SMALL_BOWEL_RADIUS_MM)),
      hu: TISSUE_HU.smallBowel,
      labelValue: LABEL_VALUES.smallBowel,
    },
    ...VESSEL_TREES.map(({ tree, labelValue, hu }) => ({
      name: tree.kind,
      pieces: tree.branches.flatMap((branch) => tubePieces(branch.centreLineLps, branch.radiusMm)),
      hu,
      labelValue,
    })),
    ...TUMOURS.map((tumour) => ({
      name: tumour.name,
      pieces: [solidOf({ type: 'sphere', centreLps: tumour.centreLps, radiusMm: tumour.radiusMm })],
      hu: TISSUE_HU.tumour,
      labelValue: tumour.labelValue,
    })),
  ];

  return {
    layers,
    structures: labelledStructures(),
    tumours: TUMOURS,
    vesselTrees: VESSEL_TREES,
    unlabelledTissues: UNLABELLED_TISSUES,
  };
}
