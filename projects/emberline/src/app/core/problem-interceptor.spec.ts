import { HttpClient, HttpContext, provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import type { CurrentUser } from '@emberline/shared';
import { AuthSession } from './auth-session';
import { EXPECTS_UNAUTHENTICATED, SHOWS_OWN_ERRORS } from './http-context-tokens';
import { problemInterceptor } from './problem-interceptor';
import { ProblemNotice } from './problem-notice';

const someone: CurrentUser = {
  id: '1c6a3f0e-2b7d-4e8f-9a0b-1c2d3e4f5a6b',
  email: 'member@emberline.test',
  displayName: 'Dr Board Member',
  roles: ['board-member'],
  boards: [],
  signInMethod: 'local',
  hasTotp: false,
  mustEnrolTotp: false,
};

describe('problemInterceptor', () => {
  let http: HttpClient;
  let backend: HttpTestingController;
  let router: Router;
  let shown: string[];

  /** Makes a GET that the server refuses; returns the error the caller received. */
  function refused(
    url: string,
    status: number,
    body: object,
    context = new HttpContext(),
  ): unknown {
    let received: unknown;
    http.get(url, { context }).subscribe({ error: (error: unknown) => (received = error) });
    backend.expectOne(url).flush(body, { status, statusText: 'Refused' });
    return received;
  }

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(withInterceptors([problemInterceptor])),
        provideHttpClientTesting(),
      ],
    });
    http = TestBed.inject(HttpClient);
    backend = TestBed.inject(HttpTestingController);
    router = TestBed.inject(Router);
    vi.spyOn(router, 'navigate').mockResolvedValue(true);
    shown = [];
    vi.spyOn(TestBed.inject(ProblemNotice), 'show').mockImplementation(async (message) => {
      shown.push(message);
    });
    TestBed.inject(AuthSession).replace(someone);
  });

  afterEach(() => backend.verify());

  it('sends the user to sign in when the session has ended, and forgets who was signed in', () => {
    const error = refused('/api/cases', 401, {
      type: 'about:blank',
      title: 'Not signed in',
      status: 401,
      detail: 'Sign in first.',
    });

    expect(router.navigate).toHaveBeenCalledWith(['/sign-in'], { queryParams: { returnUrl: '/' } });
    expect(TestBed.inject(AuthSession).user()).toBeNull();
    expect(error).toBeTruthy();
    expect(shown).toEqual(['Your session has ended. Sign in again to go on.']);
  });

  it('leaves a 401 alone when the caller expects one (the session probe, a refused sign-in)', () => {
    refused(
      '/api/auth/me',
      401,
      { type: 'about:blank', title: 'Not signed in', status: 401 },
      new HttpContext().set(EXPECTS_UNAUTHENTICATED, true),
    );

    expect(router.navigate).not.toHaveBeenCalled();
    expect(TestBed.inject(AuthSession).user()).toEqual(someone);
    expect(shown).toEqual([]);
  });

  it('tells the problem’s detail in a snack bar and still hands the error to the caller', () => {
    const error = refused('/api/cases', 409, {
      type: 'about:blank',
      title: 'Conflict',
      status: 409,
      detail: 'A record with that value exists already.',
    });

    expect(shown).toEqual(['A record with that value exists already.']);
    expect(error).toBeTruthy();
    expect(router.navigate).not.toHaveBeenCalled();
  });

  it('says the server cannot be reached when there is no answer at all', () => {
    let received: unknown;
    http.get('/api/boards').subscribe({ error: (error: unknown) => (received = error) });
    backend
      .expectOne('/api/boards')
      .error(new ProgressEvent('error'), { status: 0, statusText: '' });

    expect(received).toBeTruthy();
    expect(shown).toEqual(['The server cannot be reached. Check the connection and try again.']);
  });

  it('keeps quiet when the caller shows the error itself', () => {
    refused(
      '/api/auth/saml/status',
      500,
      { type: 'about:blank', title: 'Internal error', status: 500, detail: 'Logged.' },
      new HttpContext().set(SHOWS_OWN_ERRORS, true),
    );

    expect(shown).toEqual([]);
  });
});
