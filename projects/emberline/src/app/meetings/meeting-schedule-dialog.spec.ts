import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { buttonNamed, submit, textOf, typeInto } from '../../testing/dom';
import { MeetingScheduleDialog, type MeetingScheduleData } from './meeting-schedule-dialog';

const chairId = '44444444-4444-4444-8444-444444444444';

const data: MeetingScheduleData = {
  boardId: 'board-1',
  boardName: 'Liver board',
  members: [
    {
      userId: chairId,
      displayName: 'Dr Chair',
      email: 'chair@example.test',
      specialty: 'hepatology',
      roles: ['board-member'],
    },
  ],
};

describe('MeetingScheduleDialog', () => {
  let fixture: ComponentFixture<MeetingScheduleDialog>;
  let http: HttpTestingController;
  let closedWith: unknown[];

  beforeEach(async () => {
    closedWith = [];
    await TestBed.configureTestingModule({
      imports: [MeetingScheduleDialog],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: MAT_DIALOG_DATA, useValue: data },
        { provide: MatDialogRef, useValue: { close: (value: unknown) => closedWith.push(value) } },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(MeetingScheduleDialog);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  async function fill(): Promise<void> {
    typeInto(fixture, '#meeting-starts-at', '2026-12-09T16:00');
    typeInto(fixture, '#meeting-place', '  Room 4  ');
    // The chair select is a Material select; set it through its form control as a user's pick would.
    const form = (
      fixture.componentInstance as unknown as {
        form: { controls: { chairId: { setValue(v: string): void } } };
      }
    ).form;
    form.controls.chairId.setValue(chairId);
    await fixture.whenStable();
  }

  it('sends the start with its offset, the duration, the chair and the trimmed place', async () => {
    await fill();
    submit(fixture);
    const request = http.expectOne('/api/boards/board-1/meetings');
    expect(request.request.method).toBe('POST');
    const body = request.request.body as Record<string, unknown>;
    expect(body['startsAt']).toMatch(/^2026-12-09T16:00:00[+-]\d{2}:\d{2}$/);
    expect(Date.parse(String(body['startsAt']))).toBe(new Date(2026, 11, 9, 16, 0).getTime());
    expect(body).toMatchObject({ durationMin: 90, chairId, place: 'Room 4' });
    request.flush({ id: 'meeting-1' }, { status: 201, statusText: 'Created' });
    expect(closedWith).toEqual([{ id: 'meeting-1' }]);
  });

  it('sends nothing without a start or a chair', async () => {
    submit(fixture);
    http.expectNone('/api/boards/board-1/meetings');
    expect(closedWith).toEqual([]);
  });

  it('shows the server detail when the meeting is refused', async () => {
    await fill();
    submit(fixture);
    http.expectOne('/api/boards/board-1/meetings').flush(
      {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'The chair must be a member of the board.',
      },
      { status: 409, statusText: 'Conflict' },
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('The chair must be a member of the board.');
    expect(buttonNamed(fixture, 'Schedule').disabled).toBe(false);
    expect(closedWith).toEqual([]);
  });
});
