import { DOCUMENT } from '@angular/common';
import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatSelectHarness } from '@angular/material/select/testing';
import { treatmentLabels, type DecisionView } from '@emberline/shared';
import { EXPECTS_UNAUTHENTICATED, SHOWS_OWN_ERRORS } from '../core/http-context-tokens';
import { buttonNamed, element, submit, textOf, typeInto } from '../../testing/dom';
import { DecisionRecordForm } from './decision-record-form';

// Invented demo case and plans.
const caseId = '3f2e1d0c-9b8a-4776-8554-433221100fed';
const url = `/api/cases/${caseId}/decision`;
const plans = [
  { id: '7d1f0c2e-8a4b-4c3d-9e5f-102030405060', name: 'Anterior subcostal' },
  { id: '8e2a1d3f-9b5c-4d4e-8f60-213141516171', name: 'Intercostal, segment VIII' },
];

function problem(status: number, type: string, detail: string, errors?: unknown[]) {
  return [
    { type, title: 'Refused', status, detail, ...(errors ? { errors } : {}) },
    { status, statusText: 'Refused' },
  ] as const;
}

describe('DecisionRecordForm', () => {
  let fixture: ComponentFixture<DecisionRecordForm>;
  let http: HttpTestingController;
  let recorded: DecisionView[];
  let staleCount: number;

  async function open(signInMethod: 'local' | 'saml' = 'local'): Promise<void> {
    fixture = TestBed.createComponent(DecisionRecordForm);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentRef.setInput('plans', plans);
    fixture.componentRef.setInput('signInMethod', signInMethod);
    recorded = [];
    staleCount = 0;
    fixture.componentInstance.recorded.subscribe((decision) => recorded.push(decision));
    fixture.componentInstance.stale.subscribe(() => staleCount++);
    await fixture.whenStable();
  }

  function select(id: string): Promise<MatSelectHarness> {
    return TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: `#${id}` }),
    );
  }

  async function choose(id: string, label: string): Promise<void> {
    const harness = await select(id);
    await harness.open();
    await harness.clickOptions({ text: label });
    await fixture.whenStable();
  }

  async function hasPlanField(): Promise<boolean> {
    const selects = await TestbedHarnessEnvironment.loader(fixture).getAllHarnesses(
      MatSelectHarness.with({ selector: '#decision-plan' }),
    );
    return selects.length > 0;
  }

  function errorsShown(): string[] {
    return Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('mat-error')).map(
      (error) => error.textContent?.trim() ?? '',
    );
  }

  beforeEach(async () => {
    sessionStorage.clear();
    await TestBed.configureTestingModule({
      imports: [DecisionRecordForm],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
  });

  afterEach(() => http.verify());

  it('sends nothing while the outcome, the rationale or the password is missing', async () => {
    await open();
    typeInto(fixture, '#decision-rationale', '   ');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(url);
    expect(errorsShown()).toEqual(['Required', 'Required', 'Required']);
  });

  it('offers the plan only for an ablation, listing the assessed plans', async () => {
    await open();
    expect(await hasPlanField()).toBe(false);

    await choose('decision-outcome', treatmentLabels['ablation-mw']);
    expect(await hasPlanField()).toBe(true);
    const plan = await select('decision-plan');
    await plan.open();
    expect(await Promise.all((await plan.getOptions()).map((option) => option.getText()))).toEqual(
      plans.map((candidate) => candidate.name),
    );
    await plan.close();

    await choose('decision-outcome', treatmentLabels.tace);
    expect(await hasPlanField()).toBe(false);
  });

  it('asks an ablation for its plan before sending', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels.cryoablation);
    typeInto(fixture, '#decision-rationale', 'Single 2 cm lesion, safe window.');
    typeInto(fixture, '#decision-password', 'secret');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone(url);
    expect(errorsShown()).toEqual(['Required']);
  });

  it('drops a plan chosen for an ablation once the outcome changes to another treatment', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels['ablation-rf']);
    await choose('decision-plan', plans[1].name);
    await choose('decision-outcome', treatmentLabels.resection);
    typeInto(fixture, '#decision-rationale', ' Resectable, good reserve. ');
    typeInto(fixture, '#decision-password', 'secret');
    submit(fixture);

    const request = http.expectOne(url);
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({
      outcome: 'resection',
      rationale: 'Resectable, good reserve.',
      urgency: 'routine',
      password: 'secret',
    });
    request.flush({ id: 'decision-1' });
    await fixture.whenStable();
    expect(recorded).toHaveLength(1);
  });

  it('sends an ablation with its plan, the conditions, the urgency and the chair’s quorum reason', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels['ablation-mw']);
    await choose('decision-plan', plans[0].name);
    typeInto(fixture, '#decision-rationale', 'Two needles cover the margin.');
    typeInto(fixture, '#decision-conditions', 'Platelets above 50 on the day.');
    typeInto(fixture, '#decision-quorum-override', 'Surgeon on call joined by phone.');
    await choose('decision-urgency', 'Urgent');
    typeInto(fixture, '#decision-password', 'secret');
    submit(fixture);

    const request = http.expectOne(url);
    expect(request.request.body).toEqual({
      outcome: 'ablation-mw',
      planId: plans[0].id,
      rationale: 'Two needles cover the margin.',
      conditions: 'Platelets above 50 on the day.',
      quorumOverrideReason: 'Surgeon on call joined by phone.',
      urgency: 'urgent',
      password: 'secret',
    });
    // A refused signature is a 401 the form explains: it must not end the session.
    expect(request.request.context.get(EXPECTS_UNAUTHENTICATED)).toBe(true);
    expect(request.request.context.get(SHOWS_OWN_ERRORS)).toBe(true);
    request.flush({ id: 'decision-1' });
  });

  it('puts the server’s field error on its field and its detail beside the form', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels['ablation-mw']);
    await choose('decision-plan', plans[0].name);
    typeInto(fixture, '#decision-rationale', 'Two needles.');
    typeInto(fixture, '#decision-password', 'secret');
    submit(fixture);
    http
      .expectOne(url)
      .flush(
        ...problem(400, 'about:blank', 'planId: Only an assessed plan is selected.', [
          { path: 'planId', message: 'Only an assessed plan is selected; this one is selected.' },
        ]),
      );
    await fixture.whenStable();

    expect(errorsShown()).toEqual(['Only an assessed plan is selected; this one is selected.']);
    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'Nothing was signed. planId: Only an assessed plan is selected.',
    );
    expect(element<HTMLTextAreaElement>(fixture, '#decision-rationale').value).toBe('Two needles.');
  });

  it('empties a refused password and says so on the field', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels.surveillance);
    typeInto(fixture, '#decision-rationale', 'Watch and rescan in three months.');
    typeInto(fixture, '#decision-password', 'wrong');
    submit(fixture);
    http
      .expectOne(url)
      .flush(
        ...problem(
          401,
          'urn:emberline:problem:password-required',
          'The password is not correct; nothing was signed.',
        ),
      );
    await fixture.whenStable();

    expect(element<HTMLInputElement>(fixture, '#decision-password').value).toBe('');
    expect(errorsShown()).toEqual(['The password is not correct; nothing was signed.']);
  });

  it('asks a single sign-on account for a fresh sign-on, keeping what was typed across it', async () => {
    await open('saml');
    expect((fixture.nativeElement as HTMLElement).querySelector('#decision-password')).toBeNull();
    await choose('decision-outcome', treatmentLabels.tace);
    typeInto(fixture, '#decision-rationale', 'Bilobar disease.');
    submit(fixture);
    const request = http.expectOne(url);
    expect(request.request.body).toEqual({
      outcome: 'tace',
      rationale: 'Bilobar disease.',
      urgency: 'routine',
    });
    request.flush(
      ...problem(401, 'urn:emberline:problem:fresh-sso-required', 'Signing needs a fresh sign-on.'),
    );
    await fixture.whenStable();
    expect(textOf(fixture)).toContain('Sign in with hospital SSO again');

    const location = TestBed.inject(DOCUMENT).location;
    const assign = vi.spyOn(location, 'assign').mockImplementation(() => undefined);
    buttonNamed(fixture, 'Sign in with hospital SSO again').click();
    expect(assign).toHaveBeenCalledWith('/api/auth/saml/login');

    // Back from the identity provider, the form opens with the text as it was.
    fixture.destroy();
    await open('saml');
    expect(element<HTMLTextAreaElement>(fixture, '#decision-rationale').value).toBe(
      'Bilobar disease.',
    );
    expect(await (await select('decision-outcome')).getValueText()).toBe(treatmentLabels.tace);
  });

  it('has the section read the case again when it was decided meanwhile', async () => {
    await open();
    await choose('decision-outcome', treatmentLabels.systemic);
    typeInto(fixture, '#decision-rationale', 'Extrahepatic spread.');
    typeInto(fixture, '#decision-password', 'secret');
    submit(fixture);
    http
      .expectOne(url)
      .flush(
        ...problem(
          409,
          'about:blank',
          'The case is decided already. Record a correction as an amendment to the decision.',
        ),
      );
    await fixture.whenStable();

    expect(staleCount).toBe(1);
    expect(textOf(fixture)).toContain('The case is decided already.');
  });
});
