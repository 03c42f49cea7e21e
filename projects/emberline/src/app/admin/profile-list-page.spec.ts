import { httpResource, provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import {
  ChangeDetectionStrategy,
  Component,
  computed,
  provideZonelessChangeDetection,
} from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatTableModule } from '@angular/material/table';
import { TypedCellDef } from '../core/typed-cell-def';
import { buttonNamed, element, textOf } from '../../testing/dom';
import { ProfileListPage, type ProfileRow } from './profile-list-page';
import { ProfileRowAction } from './profile-row-action';

interface Gadget extends ProfileRow {
  widthMm: number;
}

const listUrl = '/api/test/gadgets';

/** A screen as the profile screens use the page: one middle column and a row action. */
@Component({
  imports: [ProfileListPage, ProfileRowAction, MatTableModule, TypedCellDef],
  template: `
    <em-profile-list-page
      heading="Gadget profiles"
      emptyText="No gadget profiles yet."
      aboutTitle="About gadgets"
      [about]="['Invented for the test.']"
      [profiles]="profiles"
      [statusText]="statusText"
      (create)="created = created + 1"
      (edit)="edited = $event"
    >
      <ng-container matColumnDef="width">
        <th mat-header-cell *matHeaderCellDef>Width (mm)</th>
        <td mat-cell *emCellDef="let gadget of rows()">{{ gadget.widthMm }} mm</td>
      </ng-container>
      <button *emRowAction="let gadget of rows()" type="button" (click)="acted = gadget">
        Polish
      </button>
    </em-profile-list-page>
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
class GadgetScreen {
  readonly profiles = httpResource<Gadget[]>(() => listUrl);
  readonly rows = computed(() => (this.profiles.hasValue() ? this.profiles.value() : []));
  statusText = '';
  created = 0;
  edited: Gadget | null = null;
  acted: Gadget | null = null;
}

const gadgets: Gadget[] = [
  { id: 'g-1', name: 'Small gadget', version: 1, widthMm: 3 },
  { id: 'g-2', name: 'Large gadget', version: 5, widthMm: 12, isDefault: true },
  { id: 'g-3', name: 'Old gadget', version: 2, widthMm: 7, isRetired: true },
];

describe('ProfileListPage', () => {
  let fixture: ComponentFixture<GadgetScreen>;
  let http: HttpTestingController;

  function host(): HTMLElement {
    return fixture.nativeElement as HTMLElement;
  }

  function rows(): HTMLElement[] {
    return Array.from(host().querySelectorAll<HTMLElement>('tr.mat-mdc-row'));
  }

  async function answer(list: Gadget[]): Promise<void> {
    // The list is a resource: whenStable would wait for it, so render once and answer it first.
    fixture.detectChanges();
    http.expectOne(listUrl).flush(list);
    await fixture.whenStable();
  }

  beforeEach(async () => {
    await TestBed.configureTestingModule({
      imports: [GadgetScreen],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(GadgetScreen);
  });

  afterEach(() => http.verify());

  it('puts the screen’s columns between the name and the actions', async () => {
    await answer(gadgets);

    const headers = Array.from(host().querySelectorAll('th')).map((th) => th.textContent?.trim());
    expect(headers).toEqual(['Name', 'Width (mm)', 'Actions']);
    const cells = Array.from(rows()[0].querySelectorAll('td'));
    expect(cells).toHaveLength(3);
    expect(cells[0].querySelector('.name')?.textContent).toBe('Small gadget');
    expect(cells[0].querySelector('.version')?.textContent).toBe('version 1');
    expect(cells[1].textContent?.trim()).toBe('3 mm');
    expect(cells[2].textContent?.replace(/\s+/g, ' ').trim()).toBe('Edit Polish');
  });

  it('marks the default under its name and dims a retired profile', async () => {
    await answer(gadgets);

    expect(rows()[1].textContent).toContain('Default for new assessments');
    expect(rows()[0].textContent).not.toContain('Default for new assessments');
    expect(rows()[2].classList).toContain('is-retired');
    expect(rows()[0].classList).not.toContain('is-retired');
  });

  it('hands the row’s profile to Edit and to the screen’s row action', async () => {
    await answer(gadgets);

    element(fixture, '[aria-label="Edit Large gadget"]').click();
    expect(fixture.componentInstance.edited?.id).toBe('g-2');
    rows()[2].querySelector<HTMLButtonElement>('button:not([aria-label])')?.click();
    expect(fixture.componentInstance.acted?.id).toBe('g-3');
    element(fixture, '.em-page-header button').click();
    expect(fixture.componentInstance.created).toBe(1);
  });

  it('says so when there is no profile yet', async () => {
    await answer([]);

    expect(rows().map((row) => row.textContent?.trim())).toEqual(['No gadget profiles yet.']);
  });

  it('shows why the list did not load, hides the table and loads it again on request', async () => {
    fixture.detectChanges();
    http
      .expectOne(listUrl)
      .flush(
        { type: 'about:blank', title: 'Forbidden', status: 403, detail: 'Administrators only.' },
        { status: 403, statusText: 'Forbidden' },
      );
    await fixture.whenStable();

    expect(element(fixture, '.load-error').textContent).toContain(
      'The gadget profiles could not be loaded: Administrators only.',
    );
    expect(element(fixture, '.em-table-scroll').hidden).toBe(true);

    buttonNamed(fixture, 'Try again').click();
    fixture.detectChanges();
    http.expectOne(listUrl).flush(gadgets);
    await fixture.whenStable();
    expect(host().querySelector('.load-error')).toBeNull();
    expect(element(fixture, '.em-table-scroll').hidden).toBe(false);
    expect(rows()).toHaveLength(3);
  });

  it('shows the aside with the clinical caution beside the list', async () => {
    await answer(gadgets);

    const aside = textOf(fixture);
    expect(aside).toContain('About gadgets');
    expect(aside).toContain('Invented for the test.');
    expect(aside).toContain('The treating team decides, following local protocols');
  });
});
