import { provideZonelessChangeDetection, signal } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import type { AssessmentResult, ZoneModel } from '@emberline/shared';
import { buttonNamed, textOf } from '../../../../testing/dom';
import { rehearsalCaution } from '../../../plans/rehearsal-caution';
import { done, plan, resultA } from '../../../plans/testing/comparison-fixtures';
import { rehearsal } from '../../../plans/testing/rehearsal-fixtures';
import { RehearsalReplayDialog } from '../rehearsal/rehearsal-replay-dialog';
import { ZoneOverlay } from './zone-overlay';
import { ZonePanel } from './zone-panel';

/**
 * The zone panel's way to the rehearsal replay, on an overlay that holds a done assessment and
 * nothing to draw (the zones and margins have their own tests).
 */
describe('ZonePanel: the insertion rehearsal of the assessment drawn', () => {
  const open = vi.fn();

  async function panel(result: AssessmentResult) {
    open.mockReset();
    const overlay = {
      phase: signal('ready'),
      problem: signal(''),
      plan: signal(plan('plan-a', 'Lateral approach')),
      assessment: signal(done('as-a', 'plan-a', result)),
      newer: signal(null),
      zones: signal([]),
      shownZones: signal(new Set<ZoneModel>()),
      primaryModel: signal('table'),
      zoneVolumesMl: signal(new Map()),
      marginModels: signal([]),
      isMarginShown: signal(true),
      marginModel: signal('table'),
      target: signal(null),
      targetProblem: signal(''),
      tumourRows: signal([]),
    };
    await TestBed.configureTestingModule({
      imports: [ZonePanel],
      providers: [
        provideZonelessChangeDetection(),
        { provide: ZoneOverlay, useValue: overlay },
        { provide: MatDialog, useValue: { open } },
      ],
    }).compileComponents();
    const fixture = TestBed.createComponent(ZonePanel);
    await fixture.whenStable();
    return fixture;
  }

  it('offers the 3D replay of each rehearsed applicator, with the rehearsal’s caution', async () => {
    const fixture = await panel({
      ...resultA,
      rehearsal: [rehearsal(), rehearsal({ applicatorIndex: 1 })],
    });
    expect(textOf(fixture)).toContain(rehearsalCaution);
    buttonNamed(fixture, 'Replay applicator 2 in 3D').click();
    expect(open).toHaveBeenCalledTimes(1);
    const [component, config] = open.mock.calls[0];
    expect(component).toBe(RehearsalReplayDialog);
    expect(config.data).toEqual({
      assessmentId: 'as-a',
      applicatorIndex: 1,
      planName: 'Lateral approach',
    });
  });

  it('says why there is no rehearsal when the engine gave a note, and says nothing otherwise', async () => {
    const noted = await panel({ ...resultA, rehearsalNote: 'Stopped at the time limit.' });
    expect(textOf(noted)).toContain('Insertion rehearsalStopped at the time limit.');
    expect(noted.nativeElement.querySelector('[data-testid="rehearsal-open-replay"]')).toBeNull();
    TestBed.resetTestingModule();

    const older = await panel(resultA);
    expect(textOf(older)).not.toContain('Insertion rehearsal');
  });
});
