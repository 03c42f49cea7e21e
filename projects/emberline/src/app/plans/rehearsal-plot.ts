import { ChangeDetectionStrategy, Component, computed, input } from '@angular/core';
import type { ApplicatorRehearsal, RehearsalPathSample } from '@emberline/shared';
import {
  Legend,
  LinearScale,
  LineController,
  LineElement,
  PointElement,
  Tooltip,
  type ChartData,
  type ChartOptions,
} from 'chart.js';
import { BaseChartDirective, provideCharts } from 'ng2-charts';
import { formatFigure } from './verdict-reason-lines';

/**
 * The tip error the plot draws a line at unless its host gives another, mm: a reading aid for
 * the curves (Emberline's display default), not a clinical limit.
 */
export const defaultTipErrorThresholdMm = 2;

/**
 * The plot's colours, tones of Emberline's own palettes (`_palettes.scss`): ember 40 for
 * free-hand, slate 40 for robot-assisted, secondary slate 20 for the threshold. The modes also
 * differ by marker (dot, triangle) and the threshold by its dashes, so no reading rests on
 * colour alone.
 */
export const rehearsalPlotColours = {
  freehand: '#a73a00',
  assisted: '#466177',
  threshold: '#26323b',
  grid: '#d7e4f1',
  text: '#3c4852',
} as const;

/** A point of the plot: insertion depth (x) and tip error (y), mm. */
export interface TipErrorPoint {
  x: number;
  y: number;
}

export const freehandLabel = 'Free-hand';
export const assistedLabel = 'Robot-assisted';

/** The samples in depth order, those with a depth or a free-hand error that is no number left out. */
function orderedSamples(samples: readonly RehearsalPathSample[]): RehearsalPathSample[] {
  return samples
    .filter((sample) => Number.isFinite(sample.depthMm) && Number.isFinite(sample.freehandMm))
    .sort((a, b) => a.depthMm - b.depthMm);
}

function isValidThreshold(thresholdMm: number): boolean {
  return Number.isFinite(thresholdMm) && thresholdMm >= 0;
}

/**
 * The datasets of one applicator's plot: free-hand and robot-assisted tip error against depth
 * (the assisted line ends where that run stopped) and, when the threshold is a length, a dashed
 * level line across the depths sampled.
 */
export function tipErrorChartData(
  rehearsal: ApplicatorRehearsal,
  thresholdMm: number,
): ChartData<'line', TipErrorPoint[]> {
  const samples = orderedSamples(rehearsal.errorAlongPath);
  const freehand = samples.map((sample) => ({ x: sample.depthMm, y: sample.freehandMm }));
  const assisted = samples.flatMap((sample) =>
    sample.assistedMm !== null && Number.isFinite(sample.assistedMm)
      ? [{ x: sample.depthMm, y: sample.assistedMm }]
      : [],
  );
  const datasets: ChartData<'line', TipErrorPoint[]>['datasets'] = [
    {
      label: freehandLabel,
      data: freehand,
      borderColor: rehearsalPlotColours.freehand,
      backgroundColor: rehearsalPlotColours.freehand,
      borderWidth: 2,
      pointStyle: 'circle',
      pointRadius: 2,
    },
    {
      label: assistedLabel,
      data: assisted,
      borderColor: rehearsalPlotColours.assisted,
      backgroundColor: rehearsalPlotColours.assisted,
      borderWidth: 2,
      pointStyle: 'triangle',
      pointRadius: 3,
    },
  ];
  if (samples.length && isValidThreshold(thresholdMm)) {
    datasets.push({
      label: `Threshold ${formatFigure(thresholdMm, 1, 'mm')}`,
      data: [
        { x: samples[0].depthMm, y: thresholdMm },
        { x: samples[samples.length - 1].depthMm, y: thresholdMm },
      ],
      borderColor: rehearsalPlotColours.threshold,
      backgroundColor: rehearsalPlotColours.threshold,
      borderWidth: 1.5,
      borderDash: [6, 4],
      // The legend draws its key as a line (no dot: the line has no samples).
      pointStyle: 'line',
      pointRadius: 0,
      pointHoverRadius: 0,
    });
  }
  return { datasets };
}

/**
 * The plot in words, for the canvas's accessible name: where each mode ends, its largest error
 * and where it first passes the threshold.
 */
export function tipErrorSummary(
  rehearsal: ApplicatorRehearsal,
  thresholdMm: number,
  subject: string,
): string {
  const samples = orderedSamples(rehearsal.errorAlongPath);
  if (!samples.length) return `${subject}: the rehearsal recorded no samples along the path.`;
  const hasThreshold = isValidThreshold(thresholdMm);
  const mm = (value: number) => formatFigure(value, 1, 'mm');
  const describe = (
    label: string,
    points: TipErrorPoint[],
    finalMm: number | null,
    isComplete: boolean,
  ): string => {
    if (!points.length) return `${label}: no samples.`;
    const last = points[points.length - 1];
    const largest = points.reduce((top, point) => (point.y > top.y ? point : top));
    const above = hasThreshold ? points.find((point) => point.y > thresholdMm) : undefined;
    const end = isComplete
      ? `${mm(finalMm ?? last.y)} at the planned depth (${mm(last.x)})`
      : `last ${mm(last.y)} at ${mm(last.x)} depth, the target not reached`;
    const over = !hasThreshold
      ? ''
      : above
        ? `, first above the threshold at ${mm(above.x)} depth`
        : ', never above the threshold';
    return `${label}: ${end}, largest ${mm(largest.y)} at ${mm(largest.x)}${over}.`;
  };
  const data = tipErrorChartData(rehearsal, thresholdMm);
  const [freehand, assisted] = data.datasets.map((dataset) => dataset.data);
  return [
    `${subject}: tip error (mm) against insertion depth (mm), a simulation estimate.`,
    describe(freehandLabel, freehand, rehearsal.freehandTipErrorMm, true),
    describe(
      assistedLabel,
      assisted,
      rehearsal.assistedTipErrorMm,
      rehearsal.reached && rehearsal.assistedTipErrorMm !== null,
    ),
    hasThreshold
      ? `Dashed line at the threshold, ${mm(thresholdMm)}.`
      : 'No threshold line: the threshold given is not a length in millimetres.',
  ].join(' ');
}

/** One sample in words, for the list read instead of the canvas. */
export function sampleWords(sample: RehearsalPathSample): string {
  const mm = (value: number) => formatFigure(value, 1, 'mm');
  const assisted =
    sample.assistedMm === null
      ? 'robot-assisted stopped'
      : `robot-assisted ${mm(sample.assistedMm)}`;
  return `Depth ${mm(sample.depthMm)}: free-hand ${mm(sample.freehandMm)}, ${assisted}`;
}

const axisTitle = (text: string) => ({
  display: true,
  text,
  color: rehearsalPlotColours.text,
});

/** Axes with titles and units, the legend under the plot, no animation (print and tests). */
export const tipErrorChartOptions: ChartOptions<'line'> = {
  responsive: true,
  maintainAspectRatio: false,
  animation: false,
  interaction: { mode: 'nearest', axis: 'x', intersect: false },
  scales: {
    x: {
      type: 'linear',
      title: axisTitle('Insertion depth (mm)'),
      grid: { color: rehearsalPlotColours.grid },
      ticks: { color: rehearsalPlotColours.text },
    },
    y: {
      type: 'linear',
      beginAtZero: true,
      title: axisTitle('Tip error (mm)'),
      grid: { color: rehearsalPlotColours.grid },
      ticks: { color: rehearsalPlotColours.text },
    },
  },
  plugins: {
    legend: {
      display: true,
      position: 'bottom',
      labels: { usePointStyle: true, boxHeight: 6, color: rehearsalPlotColours.text },
    },
    tooltip: {
      callbacks: {
        title: (items) =>
          items[0] ? `Depth ${formatFigure(items[0].parsed.x ?? 0, 1, 'mm')}` : '',
        label: (item) =>
          `${item.dataset.label ?? ''}: ${formatFigure(item.parsed.y ?? 0, 1, 'mm')}`,
      },
    },
  },
};

/**
 * One applicator's tip error along the insertion, free-hand against robot-assisted, with a
 * dashed threshold line (Chart.js through ng2-charts; only the line chart's parts are
 * registered, so the rest of Chart.js stays out of the bundle). The canvas is named by a
 * summary in words; every sample is listed for screen readers.
 */
@Component({
  selector: 'em-rehearsal-plot',
  imports: [BaseChartDirective],
  providers: [
    provideCharts({
      registerables: [LineController, LineElement, PointElement, LinearScale, Legend, Tooltip],
      defaults: { font: { family: 'Roboto, sans-serif', size: 11 } },
    }),
  ],
  changeDetection: ChangeDetectionStrategy.OnPush,
  template: `
    <div class="frame">
      <canvas
        baseChart
        type="line"
        role="img"
        [data]="data()"
        [options]="options"
        [legend]="true"
        [attr.aria-label]="summary()"
      ></canvas>
    </div>
    <ul class="hidden-text" [attr.aria-label]="'Samples of the plot, ' + subject()">
      @for (sample of samples(); track $index) {
        <li>{{ words(sample) }}</li>
      }
    </ul>
  `,
  styles: `
    :host {
      display: block;
    }

    .frame {
      position: relative;
      width: min(360px, 100%);
      min-width: 240px;
      height: 220px;
    }

    .hidden-text {
      position: absolute;
      width: 1px;
      height: 1px;
      margin: 0;
      padding: 0;
      overflow: hidden;
      clip-path: inset(50%);
      white-space: nowrap;
    }

    @media print {
      .frame {
        width: 300px;
        height: 180px;
      }
    }
  `,
})
export class RehearsalPlot {
  readonly rehearsal = input.required<ApplicatorRehearsal>();
  /** Where the dashed line lies, mm. */
  readonly thresholdMm = input(defaultTipErrorThresholdMm);
  /** What the plot is of, for its summary: "Applicator 1 of Lateral approach". */
  readonly subject = input('Insertion rehearsal');

  protected readonly options = tipErrorChartOptions;
  protected readonly words = sampleWords;
  protected readonly data = computed(() => tipErrorChartData(this.rehearsal(), this.thresholdMm()));
  protected readonly samples = computed(() => orderedSamples(this.rehearsal().errorAlongPath));
  protected readonly summary = computed(() =>
    tipErrorSummary(this.rehearsal(), this.thresholdMm(), this.subject()),
  );
}
