import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import type { DecisionView } from '@emberline/shared';
import { element, submit, textOf, typeInto } from '../../testing/dom';
import { DecisionAmendmentForm } from './decision-amendment-form';

const caseId = '3f2e1d0c-9b8a-4776-8554-433221100fed';
const url = `/api/cases/${caseId}/decision/amendments`;

describe('DecisionAmendmentForm', () => {
  let fixture: ComponentFixture<DecisionAmendmentForm>;
  let http: HttpTestingController;
  let amended: DecisionView[];

  async function open(signInMethod: 'local' | 'saml'): Promise<void> {
    fixture = TestBed.createComponent(DecisionAmendmentForm);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentRef.setInput('signInMethod', signInMethod);
    amended = [];
    fixture.componentInstance.amended.subscribe((decision) => amended.push(decision));
    await fixture.whenStable();
  }

  beforeEach(async () => {
    sessionStorage.clear();
    await TestBed.configureTestingModule({
      imports: [DecisionAmendmentForm],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
  });

  afterEach(() => http.verify());

  it('needs a reason and a text, by the shared rule, before it asks for a signature', async () => {
    await open('local');
    typeInto(fixture, '#amendment-reason', 'x'.repeat(2001));
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(url);
    const errors = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('mat-error'),
    ).map((error) => error.textContent?.trim());
    // amendDecisionSchema: reason at most 2000 characters; text required; password required.
    expect(errors).toEqual(['At most 2000 characters', 'Required', 'Required']);
  });

  it('signs with the password typed again and hands back the decision', async () => {
    await open('local');
    typeInto(fixture, '#amendment-reason', 'Typing error in the conditions');
    typeInto(fixture, '#amendment-text', 'Platelets above 50 × 10⁹/L, not 50 × 10⁶/L.');
    typeInto(fixture, '#amendment-password', 'secret');
    submit(fixture);

    const request = http.expectOne(url);
    expect(request.request.body).toEqual({
      reason: 'Typing error in the conditions',
      text: 'Platelets above 50 × 10⁹/L, not 50 × 10⁶/L.',
      password: 'secret',
    });
    request.flush({ id: 'decision-1', amendments: [] });
    await fixture.whenStable();
    expect(amended).toHaveLength(1);
    expect(element<HTMLTextAreaElement>(fixture, '#amendment-reason').value).toBe('');
  });

  it('has no password field for a single sign-on account and explains a stale sign-on', async () => {
    await open('saml');
    expect((fixture.nativeElement as HTMLElement).querySelector('#amendment-password')).toBeNull();
    typeInto(fixture, '#amendment-reason', 'Plan name');
    typeInto(fixture, '#amendment-text', 'The plan is the intercostal one.');
    submit(fixture);
    const request = http.expectOne(url);
    expect(request.request.body).toEqual({
      reason: 'Plan name',
      text: 'The plan is the intercostal one.',
    });
    request.flush(
      {
        type: 'urn:emberline:problem:fresh-sso-required',
        title: 'Signature not confirmed',
        status: 401,
        detail: 'Signing needs a fresh hospital sign-on.',
      },
      { status: 401, statusText: 'Unauthorized' },
    );
    await fixture.whenStable();

    expect(textOf(fixture)).toContain('Sign in with hospital SSO again');
    expect(amended).toEqual([]);
    expect(element<HTMLTextAreaElement>(fixture, '#amendment-text').value).toBe(
      'The plan is the intercostal one.',
    );
  });
});
