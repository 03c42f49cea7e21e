import { draggedWindow, greyLevel, presetOf, windowBounds, windowPresets } from './display-window';

/**
 * Attenuation of tissues in Hounsfield units, nominal values of the trade (common practice,
 * from memory): air −1000, aerated lung about −850, fat about −100, water 0, liver parenchyma
 * 40–60 unenhanced and up to about 110 portal-venous, cortical bone 700 and above.
 */
const tissueHu = {
  air: -1000,
  lung: -850,
  fat: -100,
  water: 0,
  liver: 60,
  enhancedLiver: 110,
  cortex: 900,
};

function preset(id: string) {
  const found = windowPresets.find((candidate) => candidate.id === id);
  if (!found) throw new Error(`no preset ${id}`);
  return found.window;
}

describe('display windows', () => {
  it('spans the grey ramp from centre − width/2 to centre + width/2', () => {
    // The linear window of DICOM PS3.3 C.11.2.1.2 in its continuous form: black below the
    // lower bound, white above the upper one, straight in between.
    const window = { centre: 40, width: 400 };
    expect(windowBounds(window)).toEqual({ lowest: -160, highest: 240 });
    expect(greyLevel(-160, window)).toBe(0);
    expect(greyLevel(40, window)).toBe(0.5);
    expect(greyLevel(240, window)).toBe(1);
    expect(greyLevel(-1000, window)).toBe(0);
    expect(greyLevel(3000, window)).toBe(1);
  });

  it('shows the soft tissues of the abdomen between fat and bone', () => {
    const abdomen = preset('abdomen');
    expect(greyLevel(tissueHu.fat, abdomen)).toBeGreaterThan(0);
    expect(greyLevel(tissueHu.enhancedLiver, abdomen)).toBeLessThan(1);
    expect(greyLevel(tissueHu.cortex, abdomen)).toBe(1);
    expect(greyLevel(tissueHu.air, abdomen)).toBe(0);
  });

  it('narrows the liver window so that water and enhanced parenchyma lie far apart in grey', () => {
    const liver = preset('liver');
    const abdomen = preset('abdomen');
    const contrast = (window: typeof liver) =>
      greyLevel(tissueHu.liver, window) - greyLevel(tissueHu.water, window);
    expect(contrast(liver)).toBeGreaterThan(2 * contrast(abdomen));
    expect(greyLevel(tissueHu.enhancedLiver, liver)).toBeLessThanOrEqual(1);
  });

  it('keeps aerated lung off black in the lung window, and bone cortex off white in the bone window', () => {
    expect(greyLevel(tissueHu.lung, preset('lung'))).toBeGreaterThan(0);
    expect(greyLevel(tissueHu.lung, preset('lung'))).toBeLessThan(0.5);
    expect(greyLevel(tissueHu.cortex, preset('bone'))).toBeLessThan(1);
    expect(greyLevel(tissueHu.fat, preset('bone'))).toBeLessThan(
      greyLevel(tissueHu.cortex, preset('bone')),
    );
  });

  it('recognises a preset by its values', () => {
    expect(presetOf({ centre: -600, width: 1500 })).toBe('lung');
    expect(presetOf({ centre: -600, width: 1400 })).toBeNull();
  });

  it('widens to the right and raises the level upwards when dragged, never below a width of 1', () => {
    const range = { min: -1024, max: 3071 };
    const moved = draggedWindow({ centre: 40, width: 400 }, 10, -20, range, 2);
    expect(moved).toEqual({ centre: 80, width: 420 });
    expect(draggedWindow({ centre: 40, width: 10 }, -100, 0, range, 2).width).toBe(1);
  });
});
