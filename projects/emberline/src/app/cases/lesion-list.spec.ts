import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MatDialog } from '@angular/material/dialog';
import type { CaseDetail, LesionView } from '@emberline/shared';
import { of } from 'rxjs';
import { buttonNamed, element, submit, typeInto } from '../../testing/dom';
import type { ConfirmDialogData } from '../core/confirm-dialog';
import { LesionList } from './lesion-list';

const caseId = '9c1d2e3f-4a5b-4c6d-8e7f-0a1b2c3d4e5f';
/** An invented lesion, linked to a tumour structure of an invented series. */
const lesion: LesionView = {
  id: 'c0000000-0000-4000-8000-000000000001',
  segment: 'VII',
  diameterMm: 24,
  kind: 'hcc',
  linkedStructures: [
    { name: 'Tumour 1', seriesLabel: 'CT series 3, 120 slices', isConfirmed: true },
  ],
};

describe('LesionList', () => {
  let fixture: ComponentFixture<LesionList>;
  let http: HttpTestingController;
  let dialogData: ConfirmDialogData[];
  let dialogAnswer: unknown;

  beforeEach(async () => {
    dialogData = [];
    dialogAnswer = undefined;
    await TestBed.configureTestingModule({
      imports: [LesionList],
      providers: [
        provideZonelessChangeDetection(),
        provideHttpClient(),
        provideHttpClientTesting(),
        {
          provide: MatDialog,
          useValue: {
            open: (_component: unknown, config: { data: ConfirmDialogData }) => {
              dialogData.push(config.data);
              return { afterClosed: () => of(dialogAnswer) };
            },
          },
        },
      ],
    }).compileComponents();
    http = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(LesionList);
    fixture.componentRef.setInput('caseId', caseId);
    fixture.componentRef.setInput('lesions', [lesion]);
    fixture.componentRef.setInput('canEdit', true);
    await fixture.whenStable();
  });

  afterEach(() => http.verify());

  function buttonLabelled(label: string): HTMLButtonElement {
    return element<HTMLButtonElement>(fixture, `button[aria-label="${label}"]`);
  }

  it('corrects a lesion in the form and sends the change to the lesion', async () => {
    const changed: CaseDetail[] = [];
    fixture.componentInstance.changed.subscribe((detail) => changed.push(detail));
    buttonLabelled('Correct the lesion in segment VII, 24 mm').click();
    await fixture.whenStable();
    expect(element(fixture, '#lesion-add-title').textContent).toContain('Correct the lesion');
    expect(element<HTMLInputElement>(fixture, '#lesion-diameter').value).toBe('24');
    typeInto(fixture, '#lesion-diameter', '31.5');
    await fixture.whenStable();
    submit(fixture);

    const request = http.expectOne(`/api/cases/${caseId}/lesions/${lesion.id}`);
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({ segment: 'VII', diameterMm: 31.5, kind: 'hcc' });
    request.flush({ id: caseId } as CaseDetail);
    await fixture.whenStable();
    expect(changed).toEqual([{ id: caseId }]);
    expect(element(fixture, '#lesion-add-title').textContent).toContain('Add a lesion');
  });

  it('does not send a diameter outside the schema’s range', async () => {
    buttonLabelled('Correct the lesion in segment VII, 24 mm').click();
    await fixture.whenStable();
    typeInto(fixture, '#lesion-diameter', '400');
    await fixture.whenStable();
    submit(fixture);
    http.expectNone(`/api/cases/${caseId}/lesions/${lesion.id}`);
    expect(buttonNamed(fixture, 'Save correction')).toBeTruthy();
  });

  it('asks before removing, naming the structures that lose their link, and removes only once confirmed', async () => {
    dialogAnswer = false;
    buttonLabelled('Remove the lesion in segment VII, 24 mm').click();
    expect(dialogData[0]?.items).toEqual(['Tumour 1 (CT series 3, 120 slices; confirmed link)']);
    http.expectNone(`/api/cases/${caseId}/lesions/${lesion.id}`);

    dialogAnswer = true;
    buttonLabelled('Remove the lesion in segment VII, 24 mm').click();
    const request = http.expectOne(`/api/cases/${caseId}/lesions/${lesion.id}`);
    expect(request.request.method).toBe('DELETE');
    request.flush({ id: caseId } as CaseDetail);
  });
});
