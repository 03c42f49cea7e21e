import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import type { LiverScoreName, LiverScores } from '@emberline/shared';
import { ClinicalCaution } from '../core/clinical-caution';

interface ScoreLine {
  name: LiverScoreName;
  label: string;
  value: string | null;
  reason: string;
}

/** MELD, MELD-Na, Child-Pugh, ALBI and the BCLC suggestion, each with why it is missing. */
@Component({
  selector: 'em-liver-scores-card',
  imports: [DatePipe, ClinicalCaution],
  templateUrl: './liver-scores-card.html',
  styleUrl: './liver-scores-card.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LiverScoresCard {
  readonly scores = input.required<LiverScores>();
  /** When the laboratory panel the scores come from was taken; null when there is none. */
  readonly takenAt = input<string | null>(null);

  protected readonly lines = computed<ScoreLine[]>(() => {
    const scores = this.scores();
    const line = (name: LiverScoreName, label: string, value: string | null): ScoreLine => ({
      name,
      label,
      value,
      reason: value === null ? (scores.unavailable[name] ?? 'no reason was given.') : '',
    });
    return [
      line('meld', 'MELD', scores.meld === null ? null : String(scores.meld)),
      line('meldNa', 'MELD-Na', scores.meldNa === null ? null : String(scores.meldNa)),
      line(
        'childPugh',
        'Child-Pugh',
        scores.childPugh === null
          ? null
          : `${scores.childPugh.points} points · class ${scores.childPugh.class}`,
      ),
      line(
        'albi',
        'ALBI',
        scores.albi === null
          ? null
          : `${signedDecimal(scores.albi.score, 3)} · grade ${scores.albi.grade}`,
      ),
    ];
  });
  protected readonly bclc = computed(() => this.scores().bclc);
  protected readonly bclcReason = computed(
    () => this.scores().unavailable.bclc ?? 'no reason was given.',
  );
}

/** A decimal with a true minus sign (−2.412), as printed clinical scores read. */
function signedDecimal(value: number, digits: number): string {
  return value.toFixed(digits).replace('-', '\u2212');
}
