/**
 * Attenuation of the invented tissues, Hounsfield units, for a contrast-enhanced CT in the
 * portal-venous phase. Values are common practice, from memory (no dataset or publication was
 * consulted), rounded: they are the nominal value of each tissue before noise is added.
 */
export const TISSUE_HU = {
  /** Room air and bowel or stomach gas: −1000 by the definition of the Hounsfield scale. */
  air: -1000,
  /** Aerated lung parenchyma: about −850. */
  lung: -850,
  /** Subcutaneous and intra-abdominal fat: about −100. */
  fat: -100,
  /** Skin and dermis: soft tissue, about 30. */
  skin: 30,
  /** Skeletal muscle and the diaphragm: about 50. */
  muscle: 50,
  /** Liver parenchyma, portal-venous phase as the brief asks: about 60. */
  liver: 60,
  /** A hypo-attenuating tumour, darker than the liver around it: about 35. */
  tumour: 35,
  /** Portal vein, portal-venous phase: about 180. */
  portalVein: 180,
  /** Hepatic veins, slightly less enhanced than the portal vein in this phase: about 165. */
  hepaticVein: 165,
  /** Hepatic artery, still enhanced in the portal-venous phase: about 200. */
  hepaticArtery: 200,
  /** Aorta, portal-venous phase: about 170. */
  aorta: 170,
  /** Inferior vena cava, mixed enhanced and unenhanced blood: about 140. */
  inferiorVenaCava: 140,
  /** Bile in the gallbladder and bile ducts: near water, about 10. */
  bile: 10,
  /** Renal parenchyma, nephrographic enhancement: about 150. */
  kidney: 150,
  /** Heart, blood pool and myocardium together, portal-venous phase: about 130. */
  heart: 130,
  /** Fluid content of the stomach: near water, about 15. */
  gastricFluid: 15,
  /** Wall of the stomach and bowel, enhanced mucosa and muscle: about 45. */
  bowelWall: 45,
  /** Collapsed small bowel, wall and fluid together: about 35. */
  smallBowel: 35,
  /** Cerebrospinal fluid in the spinal canal: about 10. */
  cerebrospinalFluid: 10,
  /** Cortical bone of ribs and vertebrae: about 900. */
  corticalBone: 900,
  /** Rib as a whole at this resolution, cortex and marrow averaged: about 600. */
  rib: 600,
  /** Cancellous bone of a vertebral body: about 300. */
  cancellousBone: 300,
} as const;

/** Lowest and highest HU a CT stores here (12 bits above −1024), common practice. */
export const STORED_HU_RANGE = { lowest: -1024, highest: 3071 } as const;
