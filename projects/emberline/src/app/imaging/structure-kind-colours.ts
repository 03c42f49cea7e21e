import type { StructureKind } from '@emberline/shared';

/**
 * Swatch colour of each structure kind. The vessels, ducts and tumour follow the trade's
 * anatomical convention (arteries red, portal veins violet, hepatic veins blue, bile ducts
 * green, tumour amber); every other kind takes a colour of Emberline's own slate-and-ember
 * palette, kept apart from those five.
 */
export const structureKindColours: Record<StructureKind, string> = {
  tumour: '#f2a900',
  'hepatic-artery': '#d7263d',
  'portal-vein': '#7b3fb5',
  'hepatic-vein': '#2f6fd6',
  'bile-duct': '#2e9e4f',
  liver: '#8c4a2f',
  gallbladder: '#9a8a4c',
  bowel: '#c98f6b',
  stomach: '#b5707a',
  lung: '#a9bcc9',
  heart: '#8a2d3b',
  kidney: '#a35b3a',
  bone: '#e4dccb',
  skin: '#d9b8a0',
};

/** The swatch of a structure not yet given a kind. */
export const unmappedStructureColour = '#5b6770';
