import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import { MatIcon } from '@angular/material/icon';
import type { PlanView } from '@emberline/shared';
import type { ComparedPlan } from '../comparison-rows';
import { VerdictBadge } from '../verdict-badge';
import { summaryLines, type SummaryFigure, type SummaryLine } from './comparison-summary';
import { PlanSlicePicture } from './plan-slice-picture';

/** One line of the band with what it draws. */
interface BandRow {
  line: SummaryLine;
  plan: PlanView;
  figures: { key: string; label: string; figure: SummaryFigure }[];
}

/**
 * The band that opens the plan comparison: a line a plan with its verdict, its nearest
 * clearance against the minimum, its coverage, its minimal margin with the bound, the zone
 * model of the verdict and a picture of the slice through its needle. A figure that misses its
 * threshold is marked by a sign and in words, never by colour alone.
 */
@Component({
  selector: 'em-comparison-summary-band',
  imports: [MatIcon, PlanSlicePicture, VerdictBadge],
  changeDetection: ChangeDetectionStrategy.OnPush,
  templateUrl: './comparison-summary-band.html',
  styleUrl: './comparison-summary-band.scss',
})
export class ComparisonSummaryBand {
  readonly columns = input.required<readonly ComparedPlan[]>();
  readonly tumourNames = input<ReadonlyMap<string, string>>(new Map());

  protected readonly rows = computed<BandRow[]>(() => {
    const columns = this.columns();
    const lines = summaryLines(columns, this.tumourNames());
    return lines.map((line, index) => ({
      line,
      plan: columns[index].plan,
      figures: [
        { key: 'clearance', label: 'Nearest clearance', figure: line.clearance },
        { key: 'coverage', label: 'Coverage', figure: line.coverage },
        { key: 'margin', label: 'Minimal margin', figure: line.margin },
        { key: 'zone-model', label: 'Zone model', figure: line.zoneModel },
      ],
    }));
  });
}
