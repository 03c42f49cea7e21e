import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { By } from '@angular/platform-browser';
import { BaseChartDirective } from 'ng2-charts';
import {
  RehearsalPlot,
  tipErrorChartData,
  tipErrorChartOptions,
  tipErrorSummary,
} from './rehearsal-plot';
import { notReachedRehearsal, rehearsal } from './testing/rehearsal-fixtures';

describe('RehearsalPlot', () => {
  it('draws free-hand and robot-assisted tip error at every sampled depth, and the threshold across them', () => {
    const [freehand, assisted, threshold] = tipErrorChartData(rehearsal(), 2).datasets;
    expect(freehand.label).toBe('Free-hand');
    expect(freehand.data).toEqual([
      { x: 0, y: 0 },
      { x: 20, y: 0.8 },
      { x: 40, y: 2.1 },
      { x: 60, y: 2.9 },
      { x: 80, y: 3.42 },
    ]);
    expect(assisted.label).toBe('Robot-assisted');
    expect(assisted.data).toEqual([
      { x: 0, y: 0 },
      { x: 20, y: 0.2 },
      { x: 40, y: 0.55 },
      { x: 60, y: 0.3 },
      { x: 80, y: 0.38 },
    ]);
    expect(threshold.label).toBe('Threshold 2.0 mm');
    expect(threshold.data).toEqual([
      { x: 0, y: 2 },
      { x: 80, y: 2 },
    ]);
    expect(threshold.borderDash).toEqual([6, 4]);
    // Told apart by marker and dashes, not by colour alone.
    expect(new Set([freehand.pointStyle, assisted.pointStyle]).size).toBe(2);
  });

  it('ends the assisted line where that run stopped, and orders samples by depth', () => {
    const shuffled = notReachedRehearsal();
    shuffled.errorAlongPath = [...shuffled.errorAlongPath].reverse();
    const [freehand, assisted] = tipErrorChartData(shuffled, 2).datasets;
    expect(freehand.data.map((point) => point.x)).toEqual([0, 20, 40, 60, 80]);
    expect(assisted.data).toEqual([
      { x: 0, y: 0 },
      { x: 20, y: 0.4 },
      { x: 40, y: 1.2 },
    ]);
  });

  it('puts the line at the threshold it is given, and none at one that is no length', () => {
    expect(tipErrorChartData(rehearsal(), 3.5).datasets[2].data).toEqual([
      { x: 0, y: 3.5 },
      { x: 80, y: 3.5 },
    ]);
    expect(tipErrorChartData(rehearsal(), -1).datasets).toHaveLength(2);
    expect(tipErrorChartData(rehearsal(), Number.NaN).datasets).toHaveLength(2);
    expect(tipErrorSummary(rehearsal(), -1, 'Applicator 1')).toContain(
      'No threshold line: the threshold given is not a length in millimetres.',
    );
  });

  it('says in words where each curve ends, peaks and first passes the threshold', () => {
    expect(tipErrorSummary(rehearsal(), 2, 'Applicator 1 of Lateral approach')).toBe(
      'Applicator 1 of Lateral approach: tip error (mm) against insertion depth (mm), a ' +
        'simulation estimate. Free-hand: 3.4 mm at the planned depth (80.0 mm), largest 3.4 mm ' +
        'at 80.0 mm, first above the threshold at 40.0 mm depth. Robot-assisted: 0.4 mm at the ' +
        'planned depth (80.0 mm), largest 0.6 mm at 40.0 mm, never above the threshold. Dashed ' +
        'line at the threshold, 2.0 mm.',
    );
    expect(tipErrorSummary(notReachedRehearsal(), 2, 'Applicator 1')).toContain(
      'Robot-assisted: last 1.2 mm at 40.0 mm depth, the target not reached, largest 1.2 mm',
    );
  });

  it('hands the chart both datasets, titled axes and a legend, and names the canvas by its summary', async () => {
    await TestBed.configureTestingModule({
      imports: [RehearsalPlot],
      providers: [provideZonelessChangeDetection()],
    }).compileComponents();
    const fixture = TestBed.createComponent(RehearsalPlot);
    fixture.componentRef.setInput('rehearsal', rehearsal());
    fixture.componentRef.setInput('subject', 'applicator 1 of Lateral approach');
    await fixture.whenStable();

    const chart = fixture.debugElement
      .query(By.directive(BaseChartDirective))
      .injector.get(BaseChartDirective);
    expect(chart.type).toBe('line');
    expect(chart.legend).toBe(true);
    const datasets = chart.data?.datasets ?? [];
    expect(datasets.map((dataset) => dataset.label)).toEqual([
      'Free-hand',
      'Robot-assisted',
      'Threshold 2.0 mm',
    ]);
    expect(datasets[1].data).toHaveLength(5);
    expect(chart.options).toBe(tipErrorChartOptions);
    const scales = tipErrorChartOptions.scales as Record<string, { title?: { text?: string } }>;
    expect(scales['x'].title?.text).toBe('Insertion depth (mm)');
    expect(scales['y'].title?.text).toBe('Tip error (mm)');

    const canvas = fixture.nativeElement.querySelector('canvas') as HTMLCanvasElement;
    expect(canvas.getAttribute('role')).toBe('img');
    expect(canvas.getAttribute('aria-label')).toContain(
      'applicator 1 of Lateral approach: tip error (mm) against insertion depth (mm)',
    );
    const items = Array.from(fixture.nativeElement.querySelectorAll('li'), (item) =>
      (item as HTMLElement).textContent?.trim(),
    );
    expect(items).toHaveLength(5);
    expect(items[2]).toBe('Depth 40.0 mm: free-hand 2.1 mm, robot-assisted 0.6 mm');

    // A new threshold moves the line.
    fixture.componentRef.setInput('thresholdMm', 1);
    await fixture.whenStable();
    expect(chart.data?.datasets[2].data).toEqual([
      { x: 0, y: 1 },
      { x: 80, y: 1 },
    ]);
  });
});
