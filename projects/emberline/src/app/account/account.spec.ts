import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import type { CurrentUser } from '@emberline/shared';
import { buttonNamed, element, submit, textOf, typeInto } from '../../testing/dom';
import { AuthSession } from '../core/auth-session';
import { Account } from './account';

const mustEnrol: CurrentUser = {
  id: '7e2c9d41-5a6b-4c3d-8e9f-0a1b2c3d4e5f',
  email: 'proceduralist@emberline.test',
  displayName: 'Dr Mei Tanaka',
  roles: ['proceduralist'],
  boards: [
    {
      boardId: '0b501abd-97fb-4520-b198-4899fae861f7',
      boardName: 'North Liver Board',
      specialty: 'interventional-radiology',
    },
  ],
  signInMethod: 'local',
  hasTotp: false,
  mustEnrolTotp: true,
};

describe('Account', () => {
  let fixture: ComponentFixture<Account>;
  let http: HttpTestingController;
  let router: Router;

  async function startSetup(): Promise<void> {
    buttonNamed(fixture, 'Set up an authenticator app').click();
    http.expectOne('/api/auth/totp/setup').flush({
      secret: 'JBSWY3DPEHPK3PXPJBSWY3DP',
      otpauthUri:
        'otpauth://totp/Emberline:proceduralist%40emberline.test?secret=JBSWY3DPEHPK3PXPJBSWY3DP&issuer=Emberline',
    });
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [Account],
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
    TestBed.inject(AuthSession).replace(mustEnrol);
    fixture = TestBed.createComponent(Account);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  it('says that the role requires a second factor before anything else', () => {
    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'Your role requires a second factor',
    );
  });

  it('shows the secret in groups of four and the set-up link', async () => {
    await startSetup();

    expect(element(fixture, '.secret').textContent?.trim()).toBe('JBSW Y3DP EHPK 3PXP JBSW Y3DP');
    expect(element(fixture, '.uri').textContent).toContain('otpauth://totp/Emberline:');
  });

  it('marks a code the server does not accept on the field and keeps it', async () => {
    await startSetup();
    typeInto(fixture, '#totp-code', '654321');
    submit(fixture);
    http.expectOne('/api/auth/totp/confirm').flush(
      {
        type: 'about:blank',
        title: 'Invalid request',
        status: 400,
        detail: 'code: the code does not match; check the clock of the device',
        errors: [{ path: 'code', message: 'does not match' }],
      },
      { status: 400, statusText: 'Bad Request' },
    );
    await fixture.whenStable();

    expect(element(fixture, 'mat-error').textContent?.trim()).toBe('Does not match');
    expect(element<HTMLInputElement>(fixture, '#totp-code').value).toBe('654321');
    expect(textOf(fixture)).toContain('check the clock of the device');
  });

  it('takes the enrolled account and opens the cases once the code is confirmed', async () => {
    await startSetup();
    typeInto(fixture, '#totp-code', '123456');
    submit(fixture);
    const confirm = http.expectOne('/api/auth/totp/confirm');
    expect(confirm.request.body).toEqual({ code: '123456' });
    confirm.flush({ ...mustEnrol, hasTotp: true, mustEnrolTotp: false });
    await fixture.whenStable();

    expect(TestBed.inject(AuthSession).user()?.hasTotp).toBe(true);
    expect(router.navigateByUrl).toHaveBeenCalledWith('/cases');
    expect(textOf(fixture)).toContain('An authenticator app is set up.');
  });
});
