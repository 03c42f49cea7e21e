import { provideHttpClient } from '@angular/common/http';
import {
  HttpTestingController,
  provideHttpClientTesting,
  type TestRequest,
} from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import type { CaseSummary, CurrentUser, Page } from '@emberline/shared';
import { element, textOf, typeInto } from '../../testing/dom';
import { AuthSession } from '../core/auth-session';
import { CaseRegister, FILTER_DEBOUNCE_MS } from './case-register';

const member: CurrentUser = {
  id: '5d1f1f9c-1a3e-4b7b-8a0e-6a7d1c2b3e4f',
  email: 'member@emberline.test',
  displayName: 'Dr Board Member',
  roles: ['board-member'],
  boards: [
    {
      boardId: '8a0c3b52-8c0e-4c43-9f0c-0f0e2a1b3c4d',
      boardName: 'North HPB board',
      specialty: 'hepatology',
    },
  ],
  signInMethod: 'local',
  hasTotp: false,
  mustEnrolTotp: false,
};

function row(index: number, nextMeetingAt: string | null = null): CaseSummary {
  return {
    id: `00000000-0000-4000-8000-${String(index).padStart(12, '0')}`,
    caseCode: `HCC-${String(index).padStart(3, '0')}`,
    boardId: member.boards[0]?.boardId ?? '',
    boardName: 'North HPB board',
    presenterName: 'Dr Ada Presenter',
    primaryDiagnosis: 'hcc',
    status: 'draft',
    nextMeetingAt,
    updatedAt: '2026-11-30T09:00:00.000Z',
  };
}

function page(items: CaseSummary[], total: number, pageIndex = 0): Page<CaseSummary> {
  return { items, total, page: pageIndex, size: 20 };
}

/** The query parameters of a request to the register, as a plain object. */
function paramsOf(request: TestRequest): Record<string, string> {
  const params = request.request.params;
  return Object.fromEntries(params.keys().map((key) => [key, params.get(key) ?? '']));
}

describe('CaseRegister', () => {
  let fixture: ComponentFixture<CaseRegister>;
  let http: HttpTestingController;

  function nextRequest(): TestRequest {
    fixture.detectChanges();
    return http.expectOne((request) => request.url === '/api/cases');
  }

  async function answer(request: TestRequest, body: Page<CaseSummary>): Promise<void> {
    request.flush(body);
    await fixture.whenStable();
  }

  function clickSortHeader(label: string): void {
    const headers = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll<HTMLElement>('th[mat-sort-header]'),
    );
    const header = headers.find((candidate) => candidate.textContent?.trim() === label);
    if (!header) throw new Error(`No sort header ${label}`);
    header.click();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [CaseRegister],
      providers: [
        provideZonelessChangeDetection(),
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    TestBed.inject(AuthSession).replace(member);
    fixture = TestBed.createComponent(CaseRegister);
  });

  afterEach(() => http.verify());

  it('asks for the first page sorted by case code', async () => {
    const first = nextRequest();
    expect(paramsOf(first)).toEqual({ page: '0', size: '20', sort: 'caseCode:asc' });
    await answer(first, page([row(1, '2026-12-08T08:00:00.000Z'), row(2)], 2));

    expect(textOf(fixture)).toContain('HCC-001');
    expect(textOf(fixture)).toContain('Hepatocellular carcinoma');
    // A case with no meeting shows a dash in the next-meeting column.
    const lastCells = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('td.mat-column-nextMeetingAt'),
    );
    expect(lastCells[1]?.textContent?.trim()).toBe('—');
  });

  it('asks the server to sort by the clicked column, then the other way', async () => {
    await answer(nextRequest(), page([row(1)], 1));

    clickSortHeader('Board');
    const ascending = nextRequest();
    expect(paramsOf(ascending)).toMatchObject({ page: '0', sort: 'board:asc' });
    await answer(ascending, page([row(1)], 1));

    clickSortHeader('Board');
    const descending = nextRequest();
    expect(paramsOf(descending)).toMatchObject({ page: '0', sort: 'board:desc' });
    await answer(descending, page([row(1)], 1));
  });

  it('asks for the next page with the paginator', async () => {
    await answer(
      nextRequest(),
      page(
        Array.from({ length: 20 }, (_, index) => row(index + 1)),
        45,
      ),
    );

    element<HTMLButtonElement>(fixture, '.mat-mdc-paginator-navigation-next').click();
    const second = nextRequest();
    expect(paramsOf(second)).toEqual({ page: '1', size: '20', sort: 'caseCode:asc' });
    await answer(second, page([row(21)], 45, 1));
  });

  it('filters on the server once typing pauses, from the first page', async () => {
    await answer(
      nextRequest(),
      page(
        Array.from({ length: 20 }, (_, index) => row(index + 1)),
        45,
      ),
    );
    element<HTMLButtonElement>(fixture, '.mat-mdc-paginator-navigation-next').click();
    await answer(nextRequest(), page([row(21)], 45, 1));

    typeInto(fixture, '#register-filter', 'H');
    typeInto(fixture, '#register-filter', 'HCC-02 ');
    fixture.detectChanges();
    http.expectNone((request) => request.url === '/api/cases');

    await new Promise((resolve) => setTimeout(resolve, FILTER_DEBOUNCE_MS + 50));
    const filtered = nextRequest();
    expect(paramsOf(filtered)).toEqual({
      page: '0',
      size: '20',
      sort: 'caseCode:asc',
      q: 'HCC-02',
    });
    await answer(filtered, page([], 0));

    expect(textOf(fixture)).toContain('No case matches the filter.');
  });

  it('tells when the register cannot be loaded and offers to try again', async () => {
    nextRequest().flush(
      {
        type: 'about:blank',
        title: 'Internal error',
        status: 500,
        detail: 'Something went wrong on the server; it has been logged.',
      },
      { status: 500, statusText: 'Server Error' },
    );
    await fixture.whenStable();

    expect(element(fixture, '[role="alert"]').textContent).toContain(
      'Something went wrong on the server',
    );
    element<HTMLButtonElement>(fixture, '[role="alert"] button').click();
    await answer(nextRequest(), page([row(1)], 1));
    expect(textOf(fixture)).toContain('HCC-001');
  });
});
