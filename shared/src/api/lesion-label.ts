/**
 * How the board names a lesion in the plan comparison and the verdict: by Couinaud segment and
 * largest diameter ("segment VIII, 24 mm"), never by a label number of the label map.
 */
export function lesionLabel(lesion: { segment: string; diameterMm: number }): string {
  return `segment ${lesion.segment}, ${Math.round(lesion.diameterMm)} mm`;
}
