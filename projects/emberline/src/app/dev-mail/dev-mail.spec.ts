import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { textOf } from '../../testing/dom';
import { DevMail, type DevMailMessage } from './dev-mail';

// Invented for the test: the shape GET /api/dev/mail answers.
const messages: DevMailMessage[] = [
  {
    id: '6c0f2b1e-3d4a-4f5b-9a8c-7e6d5c4b3a21',
    from: 'no-reply@emberline.invalid',
    to: ['proceduralist@emberline.test', 'coordinator@emberline.test'],
    subject: 'Procedure booked: EMB-2027-014 microwave ablation',
    receivedAt: '2027-01-04T09:15:00.000Z',
    attachments: [
      { index: 0, filename: 'attachment', contentType: 'text/calendar', size: 512 },
      { index: 1, filename: 'invitation.ics', contentType: 'application/ics', size: 1204 },
    ],
  },
];

describe('DevMail', () => {
  let fixture: ComponentFixture<DevMail>;
  let http: HttpTestingController;

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [DevMail],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(DevMail);
  });

  afterEach(() => http.verify());

  it('lists the messages with a download link per attachment', async () => {
    fixture.detectChanges();
    http.expectOne('/api/dev/mail').flush(messages);
    await fixture.whenStable();

    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelectorAll('tr.mat-mdc-row')).toHaveLength(1);
    expect(textOf(fixture)).toContain('Procedure booked: EMB-2027-014 microwave ablation');
    expect(textOf(fixture)).toContain('proceduralist@emberline.test, coordinator@emberline.test');
    const links = Array.from(host.querySelectorAll<HTMLAnchorElement>('a.attachment'));
    expect(links.map((link) => link.getAttribute('href'))).toEqual([
      `/api/dev/mail/${messages[0].id}/attachments/0`,
      `/api/dev/mail/${messages[0].id}/attachments/1`,
    ]);
    expect(links[1].textContent).toContain('invitation.ics (1,204 bytes)');
    expect(links[1].hasAttribute('download')).toBe(true);
  });

  it('says so when the server runs no mail catcher (404)', async () => {
    fixture.detectChanges();
    http
      .expectOne('/api/dev/mail')
      .flush({ title: 'Not found' }, { status: 404, statusText: 'Not Found' });
    await fixture.whenStable();

    expect(textOf(fixture)).toContain('This server runs no local mail catcher');
    expect((fixture.nativeElement as HTMLElement).querySelector('table')).toBeNull();
  });
});
