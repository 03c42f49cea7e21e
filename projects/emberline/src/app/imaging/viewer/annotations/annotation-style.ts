/**
 * How annotations look in every view. Pale slate (tone 90 of Emberline's own slate palette,
 * `_palettes.scss`) with a deep slate (tone 10) outline on the slices:
 *
 * - light enough to read on the dark parts of a slice, and the dark outline keeps it readable
 *   over bright bone or contrast;
 * - a low-chroma blue-grey of the product's own palette, so it is none of the anatomical
 *   colours (arteries red, portal veins violet, bile ducts green, tumour amber); hepatic veins
 *   are a saturated mid blue (#2f6fd6), told apart by lightness (L* 90 against about 47);
 * - apart from the other marks on the views: the ember orange and yellow of the applicator
 *   paths, the lime and pink of the zones, the saturated cyan of the distance measurement
 *   (whose dots are plain, where an annotation's point is a ring round a dot), and the white
 *   crosshair ball of the 3D view (smaller than an annotation's ball).
 */
export const annotationColour = '#cae6ff';
export const annotationOutline = '#011e2e';

/** Radius of an annotation's ball in the 3D view, mm (the crosshair's is 1.5 mm). */
export const annotationBallRadiusMm = 2.5;
/** Radius of a line annotation's tube in the 3D view, mm (an applicator's is 1 mm). */
export const annotationTubeRadiusMm = 0.6;
