import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { MatButtonToggleHarness } from '@angular/material/button-toggle/testing';
import { MatSliderHarness } from '@angular/material/slider/testing';
import type { RehearsalReplayView } from '@emberline/shared';
import { rehearsalCaution } from '../../../plans/rehearsal-caution';
import { replayView } from '../../../plans/testing/rehearsal-fixtures';
import { noWebGl2Message } from '../webgl-support';
import type { FrameShapes, ReplayGeometry } from './rehearsal-frames';
import { REHEARSAL_SCENE_FACTORY, RehearsalReplay } from './rehearsal-replay';
import type { RehearsalSceneView } from './rehearsal-scene';

/** Stands in for the vtk.js scene (happy-dom has no WebGL): keeps what the replay hands it. */
class RecordingScene implements RehearsalSceneView {
  readonly surfaces: ReplayGeometry[] = [];
  readonly frames: FrameShapes[] = [];
  renders = 0;
  isDisposed = false;
  setSurface(geometry: ReplayGeometry): void {
    this.surfaces.push(geometry);
  }
  showFrame(shapes: FrameShapes): void {
    this.frames.push(shapes);
  }
  resetCamera(): void {
    /* The camera is the vtk.js scene's business. */
  }
  resize(): void {
    /* Nothing to size without a canvas. */
  }
  render(): void {
    this.renders++;
  }
  dispose(): void {
    this.isDisposed = true;
  }
  /** The points on screen now. */
  shownPoints(): number[] {
    return Array.from(this.frames.at(-1)?.surfacePoints ?? []);
  }
}

describe('RehearsalReplay', () => {
  let fixture: ComponentFixture<RehearsalReplay>;
  let http: HttpTestingController;
  let scenes: RecordingScene[];
  let webGl: boolean;
  const view = replayView();
  const [freehand, assisted] = view.replays;

  /** The text of the element with that test id (the component's host carries one too). */
  const text = (testId: string) => {
    const root = fixture.nativeElement as HTMLElement;
    const selector = `[data-testid="${testId}"]`;
    const element = root.matches(selector) ? root : root.querySelector(selector);
    return (element?.textContent ?? '').replace(/\s+/g, ' ').trim();
  };

  async function open(
    body: RehearsalReplayView | null,
    options: { webGl?: boolean; status?: number } = {},
  ): Promise<void> {
    webGl = options.webGl ?? true;
    fixture = TestBed.createComponent(RehearsalReplay);
    fixture.componentRef.setInput('assessmentId', 'as-1');
    fixture.componentRef.setInput('applicatorIndex', 0);
    // Let the resource send its request (whenStable would wait for the answer).
    TestBed.tick();
    const request = http.expectOne('/api/assessments/as-1/rehearsal');
    if (options.status) {
      request.flush(
        { title: 'Not Found', status: options.status, detail: 'No rehearsal was stored.' },
        { status: options.status, statusText: 'Not Found' },
      );
    } else {
      request.flush(body);
    }
    await fixture.whenStable();
  }

  beforeEach(async () => {
    scenes = [];
    await TestBed.configureTestingModule({
      imports: [RehearsalReplay],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: REHEARSAL_SCENE_FACTORY,
          useValue: {
            isSupported: () => webGl,
            create: () => {
              const scene = new RecordingScene();
              scenes.push(scene);
              return scene;
            },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
  });

  afterEach(() => {
    vi.useRealTimers();
    http.verify();
  });

  it('draws the first free-hand frame: the surface triangles, its node positions, time and depth', async () => {
    await open(view);
    expect(text('rehearsal-frame-readout')).toBe('t = 0.00 s · depth 0.0 mm');
    expect(scenes).toHaveLength(1);
    const [scene] = scenes;
    expect(scene.surfaces).toHaveLength(1);
    expect(Array.from(scene.surfaces[0].polys).slice(0, 4)).toEqual([3, 0, 2, 1]);
    expect(scene.shownPoints()).toEqual(freehand.frames[0].surfaceMm);
    expect(scene.frames.at(-1)?.tipMm).toEqual(freehand.frames[0].tipMm);
    expect(scene.renders).toBeGreaterThan(0);
    // The server's caution, in view beside the replay.
    expect(text('rehearsal-replay')).toContain(view.caution);
  });

  it('moves to the frame the slider names: read-out and the scene’s points follow', async () => {
    await open(view);
    const slider = await TestbedHarnessEnvironment.loader(fixture).getHarness(MatSliderHarness);
    const thumb = await slider.getEndThumb();
    expect(await thumb.getMaxValue()).toBe(4);
    await thumb.setValue(3);
    await fixture.whenStable();

    expect(text('rehearsal-frame-readout')).toBe('t = 1.20 s · depth 31.5 mm');
    // Screen readers hear the moment, not the frame's number.
    const input = (fixture.nativeElement as HTMLElement).querySelector(
      '[data-testid="rehearsal-slider"]',
    );
    expect(input?.getAttribute('aria-valuetext')).toBe('t = 1.20 s · depth 31.5 mm');
    // Tip (13, −28.5, 13) and target (10, −18, 13): √(3² + 10.5²) = 10.92 mm.
    expect(text('rehearsal-frame-details')).toBe('Frame 4 of 5 · tip to target 10.9 mm');
    const [scene] = scenes;
    expect(scene.shownPoints()).toEqual(freehand.frames[3].surfaceMm);
    expect(scene.shownPoints()).not.toEqual(freehand.frames[0].surfaceMm);
    expect(scene.frames.at(-1)?.targetMm).toEqual(freehand.frames[3].targetMm);
    // The same surface: its triangles are not handed over again.
    expect(scene.surfaces).toHaveLength(1);
  });

  it('switches to the robot-assisted insertion at the same moment', async () => {
    await open(view);
    const loader = TestbedHarnessEnvironment.loader(fixture);
    await (await (await loader.getHarness(MatSliderHarness)).getEndThumb()).setValue(3);
    const assistedToggle = await loader.getHarness(
      MatButtonToggleHarness.with({ text: 'Robot-assisted' }),
    );
    await assistedToggle.check();
    await fixture.whenStable();

    expect(text('rehearsal-frame-readout')).toBe('t = 1.20 s · depth 31.5 mm');
    expect(text('rehearsal-frame-details')).toBe('Frame 4 of 9 · tip to target 10.5 mm');
    const [scene] = scenes;
    expect(scene.surfaces).toHaveLength(2);
    expect(scene.shownPoints()).toEqual(assisted.frames[3].surfaceMm);
    expect(scene.shownPoints()).not.toEqual(freehand.frames[3].surfaceMm);
  });

  it('plays the frames at the pace they were recorded and stops at the last', async () => {
    await open(view);
    vi.useFakeTimers();
    const play = (fixture.nativeElement as HTMLElement).querySelector<HTMLButtonElement>(
      '[data-testid="rehearsal-play"]',
    );
    expect(play?.getAttribute('aria-label')).toBe('Play the replay');
    play?.click();
    fixture.detectChanges();
    expect(play?.getAttribute('aria-label')).toBe('Pause the replay');

    // Frames are 0.4 s apart.
    await vi.advanceTimersByTimeAsync(399);
    fixture.detectChanges();
    expect(text('rehearsal-frame-readout')).toBe('t = 0.00 s · depth 0.0 mm');
    await vi.advanceTimersByTimeAsync(1);
    fixture.detectChanges();
    expect(text('rehearsal-frame-readout')).toBe('t = 0.40 s · depth 10.5 mm');
    expect(scenes[0].shownPoints()).toEqual(freehand.frames[1].surfaceMm);

    await vi.advanceTimersByTimeAsync(5000);
    fixture.detectChanges();
    expect(text('rehearsal-frame-readout')).toBe('t = 1.60 s · depth 42.0 mm');
    expect(play?.getAttribute('aria-label')).toBe('Play the replay');

    // Play again runs from the start; pause then holds the frame.
    play?.click();
    fixture.detectChanges();
    expect(text('rehearsal-frame-readout')).toBe('t = 0.00 s · depth 0.0 mm');
    play?.click();
    await vi.advanceTimersByTimeAsync(2000);
    fixture.detectChanges();
    expect(text('rehearsal-frame-readout')).toBe('t = 0.00 s · depth 0.0 mm');
  });

  it('says so when the assessment has no rehearsal (404), and draws nothing', async () => {
    await open(null, { status: 404 });
    expect(text('rehearsal-replay-missing')).toContain(
      'This assessment has no insertion rehearsal to replay',
    );
    expect(scenes).toHaveLength(0);
    // Our own caution, as there is none from the server.
    expect(text('rehearsal-replay')).toContain(rehearsalCaution);
  });

  it('tells a server failure in the problem’s words', async () => {
    await open(null, { status: 500 });
    expect(text('rehearsal-replay-problem')).toBe(
      'The rehearsal replay could not be read. No rehearsal was stored.',
    );
  });

  it('refuses a replay whose triangles name nodes its frames lack, saying which', async () => {
    const broken: RehearsalReplayView = {
      ...view,
      replays: [{ ...freehand, triangles: [0, 1, 2, 0, 1, 7] }, assisted],
    };
    await open(broken);
    expect(text('rehearsal-replay-problem')).toBe(
      'The free-hand replay cannot be drawn: triangle 2 names node 7, but the surface has 4 ' +
        'nodes (0 to 3).',
    );
    expect(scenes).toHaveLength(0);
  });

  it('without WebGL says why there is no 3D view and keeps the slider and read-outs', async () => {
    await open(view, { webGl: false });
    expect(text('rehearsal-no-webgl')).toContain(noWebGl2Message);
    expect(scenes).toHaveLength(0);
    const slider = await TestbedHarnessEnvironment.loader(fixture).getHarness(MatSliderHarness);
    await (await slider.getEndThumb()).setValue(2);
    await fixture.whenStable();
    expect(text('rehearsal-frame-readout')).toBe('t = 0.80 s · depth 21.0 mm');
  });

  it('lets the scene go when it closes', async () => {
    await open(view);
    fixture.destroy();
    expect(scenes[0].isDisposed).toBe(true);
  });
});
