import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import type { CurrentUser, ProblemDetails } from '@emberline/shared';
import { buttonNamed, element, submit, textOf, typeInto } from '../../testing/dom';
import { AuthSession } from '../core/auth-session';
import { TOTP_REQUIRED_PROBLEM } from '../core/problem';
import { SignIn } from './sign-in';

const presenter: CurrentUser = {
  id: '0b8f5d0e-3b1c-4d6a-9a53-2d2f0c9d7e11',
  email: 'presenter@emberline.test',
  displayName: 'Dr Ada Presenter',
  roles: ['presenting-physician'],
  boards: [],
  signInMethod: 'local',
  hasTotp: true,
  mustEnrolTotp: false,
};

function problem(status: number, type: string, detail: string): ProblemDetails {
  return { type, title: status === 429 ? 'Too many attempts' : 'Not signed in', status, detail };
}

describe('SignIn', () => {
  let fixture: ComponentFixture<SignIn>;
  let http: HttpTestingController;
  let router: Router;

  async function open(samlEnabled = false, inputs: Record<string, string> = {}): Promise<void> {
    fixture = TestBed.createComponent(SignIn);
    for (const [name, value] of Object.entries(inputs)) fixture.componentRef.setInput(name, value);
    // Not whenStable(): a request in flight keeps the application unstable until it is answered.
    fixture.detectChanges();
    http.expectOne('/api/auth/saml/status').flush({ enabled: samlEnabled });
    await fixture.whenStable();
  }

  function enterCredentials(): void {
    typeInto(fixture, '#sign-in-email', 'presenter@emberline.test');
    typeInto(fixture, '#sign-in-password', 'ember-demo-2026');
    submit(fixture);
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [SignIn],
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    router = TestBed.inject(Router);
    vi.spyOn(router, 'navigateByUrl').mockResolvedValue(true);
  });

  afterEach(() => http.verify());

  it('asks for the six-digit code when the server answers that the account needs one', async () => {
    await open();
    enterCredentials();

    const login = http.expectOne('/api/auth/login');
    expect(login.request.body).toEqual({
      email: 'presenter@emberline.test',
      password: 'ember-demo-2026',
    });
    login.flush(
      problem(401, TOTP_REQUIRED_PROBLEM, 'Enter the six-digit code from your authenticator app.'),
      {
        status: 401,
        statusText: 'Unauthorized',
      },
    );
    await fixture.whenStable();

    expect(element(fixture, '#sign-in-code')).toBeTruthy();
    expect(textOf(fixture)).toContain('Enter the six-digit code from your authenticator app.');
    expect(fixture.nativeElement.querySelector('#sign-in-password')).toBeNull();
    expect(router.navigateByUrl).not.toHaveBeenCalled();
  });

  it('sends the code with the same e-mail and password and then opens the cases', async () => {
    await open();
    enterCredentials();
    http
      .expectOne('/api/auth/login')
      .flush(problem(401, TOTP_REQUIRED_PROBLEM, 'Enter the code.'), {
        status: 401,
        statusText: 'Unauthorized',
      });
    await fixture.whenStable();

    typeInto(fixture, '#sign-in-code', '123456');
    submit(fixture);
    const withCode = http.expectOne('/api/auth/login');
    expect(withCode.request.body).toEqual({
      email: 'presenter@emberline.test',
      password: 'ember-demo-2026',
      code: '123456',
    });
    withCode.flush(presenter);
    await fixture.whenStable();

    expect(TestBed.inject(AuthSession).user()).toEqual(presenter);
    expect(router.navigateByUrl).toHaveBeenCalledWith('/cases');
  });

  it('stays on the code step and says so when the code is wrong', async () => {
    await open();
    enterCredentials();
    http
      .expectOne('/api/auth/login')
      .flush(problem(401, TOTP_REQUIRED_PROBLEM, 'Enter the code.'), {
        status: 401,
        statusText: 'Unauthorized',
      });
    await fixture.whenStable();
    typeInto(fixture, '#sign-in-code', '000000');
    submit(fixture);

    http
      .expectOne('/api/auth/login')
      .flush(problem(401, TOTP_REQUIRED_PROBLEM, 'The code is not correct.'), {
        status: 401,
        statusText: 'Unauthorized',
      });
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain('The code is not correct.');
    expect(element<HTMLInputElement>(fixture, '#sign-in-code').value).toBe('000000');
  });

  it('refuses a six-digit code step entry that is not six digits without asking the server', async () => {
    await open();
    enterCredentials();
    http
      .expectOne('/api/auth/login')
      .flush(problem(401, TOTP_REQUIRED_PROBLEM, 'Enter the code.'), {
        status: 401,
        statusText: 'Unauthorized',
      });
    await fixture.whenStable();

    typeInto(fixture, '#sign-in-code', '12 34');
    submit(fixture);
    await fixture.whenStable();

    http.expectNone('/api/auth/login');
    expect(textOf(fixture)).toContain('A six-digit code');
  });

  it('tells a refused password and keeps what was typed', async () => {
    await open();
    enterCredentials();
    http
      .expectOne('/api/auth/login')
      .flush(problem(401, 'about:blank', 'The e-mail address or password is not correct.'), {
        status: 401,
        statusText: 'Unauthorized',
      });
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'The e-mail address or password is not correct.',
    );
    expect(element<HTMLInputElement>(fixture, '#sign-in-email').value).toBe(
      'presenter@emberline.test',
    );
    expect(element<HTMLInputElement>(fixture, '#sign-in-password').value).toBe('ember-demo-2026');
    expect(fixture.nativeElement.querySelector('#sign-in-code')).toBeNull();
  });

  it('tells the user to wait when sign-in is rate-limited', async () => {
    await open();
    enterCredentials();
    http
      .expectOne('/api/auth/login')
      .flush(
        problem(
          429,
          'urn:emberline:problem:rate-limited',
          'Too many sign-in attempts. Wait a few minutes, then try again.',
        ),
        {
          status: 429,
          statusText: 'Too Many Requests',
        },
      );
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain('Wait a few minutes');
  });

  it('offers hospital SSO only when the server has it enabled', async () => {
    await open(true);
    expect(buttonNamed(fixture, 'Sign in with hospital SSO')).toBeTruthy();

    fixture.destroy();
    await open(false);
    expect(textOf(fixture)).not.toContain('Sign in with hospital SSO');
  });

  it('explains a refused hospital sign-on', async () => {
    await open(true, { sso: 'refused' });
    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'Sign-in through the hospital SSO did not succeed',
    );
  });
});
