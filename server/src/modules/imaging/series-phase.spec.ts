/**
 * Phase hints from series descriptions as departments commonly write them (common practice,
 * from memory; a hint for the presenter, never a fact).
 */
import { describe, expect, it } from 'vitest';
import { phaseHintOf } from './series-phase';

const described = (text: string, agent?: string) => ({
  '0008103E': { vr: 'LO', Value: [text] },
  ...(agent ? { '00180010': { vr: 'LO', Value: [agent] } } : {}),
});

describe('phaseHintOf', () => {
  it.each([
    ['Portal venous 2.5mm', 'portal venous'],
    ['PV_5mm', 'portal venous'],
    ['Abdomen venous', 'portal venous'],
    ['Late arterial', 'arterial'],
    ['Art1 1.25', 'arterial'],
    ['Delayed venous 3mm', 'delayed'],
    ['Equilibrium phase', 'delayed'],
    ['Non-contrast abdomen', 'non-contrast'],
    ['NC 5mm', 'non-contrast'],
  ])('"%s" → %s', (text, phase) => {
    expect(phaseHintOf(described(text))).toBe(phase);
  });

  it('says "contrast" when only the agent is named, and nothing when nothing says', () => {
    expect(phaseHintOf(described('Abdomen 5mm', 'IOHEXOL'))).toBe('contrast');
    expect(phaseHintOf(described('Abdomen 5mm', 'NONE'))).toBeNull();
    expect(phaseHintOf(described('Abdomen 5mm'))).toBeNull();
  });
});
