import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { clinicalCaution, computeLiverScores, type LiverScores } from '@emberline/shared';
import { textOf } from '../../testing/dom';
import { LiverScoresCard } from './liver-scores-card';

describe('LiverScoresCard', () => {
  let fixture: ComponentFixture<LiverScoresCard>;

  async function show(scores: LiverScores, takenAt: string | null = null): Promise<void> {
    fixture.componentRef.setInput('scores', scores);
    fixture.componentRef.setInput('takenAt', takenAt);
    await fixture.whenStable();
  }

  function lineOf(label: string): string {
    const lines = Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('.score'));
    const line = lines.find((candidate) =>
      candidate.querySelector('dt')?.textContent?.trim().startsWith(label),
    );
    return (line?.querySelector('dd')?.textContent ?? '').replace(/\s+/g, ' ').trim();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [LiverScoresCard],
      providers: [provideZonelessChangeDetection()],
    }).compileComponents();
    fixture = TestBed.createComponent(LiverScoresCard);
  });

  it('gives the reason beside every score that cannot be computed', async () => {
    await show({
      meld: null,
      meldNa: null,
      childPugh: null,
      albi: null,
      bclc: null,
      unavailable: {
        meld: 'Not recorded: creatinine.',
        meldNa: 'Not recorded: creatinine, sodium.',
        childPugh: 'Not recorded: ascites.',
        albi: 'Not recorded: albumin.',
        bclc: 'ECOG performance status is not recorded.',
      },
    });

    expect(lineOf('MELD-Na')).toBe('Not available: Not recorded: creatinine, sodium.');
    expect(lineOf('MELD')).toBe('Not available: Not recorded: creatinine.');
    expect(lineOf('Child-Pugh')).toBe('Not available: Not recorded: ascites.');
    expect(lineOf('ALBI')).toBe('Not available: Not recorded: albumin.');
    expect(lineOf('BCLC')).toBe('Not available: ECOG performance status is not recorded.');
    expect(textOf(fixture)).toContain('No laboratory values yet');
  });

  it('shows the scores the shared computation gives, with the BCLC rationale and its caution', async () => {
    // Bilirubin 1 mg/dL, albumin 4 g/dL, INR 1, creatinine 1 mg/dL, sodium 140: MELD 6 (the
    // floor), Child-Pugh 5 points class A; one 18 mm nodule with ECOG 0 is BCLC 0.
    const scores = computeLiverScores({
      bilirubinMgDl: 1,
      albuminGDl: 4,
      inr: 1,
      creatinineMgDl: 1,
      sodiumMmolL: 140,
      ascites: 'none',
      encephalopathy: 'none',
      dialysisTwiceInPastWeek: false,
      lesionDiametersMm: [18],
      ecogPerformanceStatus: 0,
      hasVascularInvasion: false,
      hasExtrahepaticSpread: false,
    });
    await show(scores, '2026-11-20');

    expect(lineOf('MELD-Na')).toBe(String(scores.meldNa));
    expect(lineOf('MELD')).toBe('6');
    expect(lineOf('Child-Pugh')).toBe('5 points · class A');
    expect(lineOf('ALBI')).toBe(
      `${scores.albi?.score.toFixed(3).replace('-', '\u2212')} · grade ${scores.albi?.grade}`,
    );
    expect(lineOf('BCLC')).toContain('Stage 0');
    expect(lineOf('BCLC')).toContain(scores.bclc?.rationale ?? 'a rationale');
    expect(lineOf('BCLC')).toContain(scores.bclc?.caution ?? 'a caution');
    expect(textOf(fixture)).toContain('20 Nov 2026');
  });

  it('carries the clinical caution whatever the scores', async () => {
    await show(computeLiverScores({ lesionDiametersMm: [] }));
    expect(textOf(fixture)).toContain(clinicalCaution);
  });
});
