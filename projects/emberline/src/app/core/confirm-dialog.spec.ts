import { provideZonelessChangeDetection } from '@angular/core';
import { TestBed, type ComponentFixture } from '@angular/core/testing';
import { MAT_DIALOG_DATA, MatDialogRef } from '@angular/material/dialog';
import { buttonNamed, textOf, typeInto } from '../../testing/dom';
import { ConfirmDialog, type ConfirmDialogData } from './confirm-dialog';

describe('ConfirmDialog', () => {
  let closedWith: unknown[];

  async function open(data: ConfirmDialogData): Promise<ComponentFixture<ConfirmDialog>> {
    closedWith = [];
    await TestBed.configureTestingModule({
      imports: [ConfirmDialog],
      providers: [
        provideZonelessChangeDetection(),
        { provide: MAT_DIALOG_DATA, useValue: data },
        { provide: MatDialogRef, useValue: { close: (value: unknown) => closedWith.push(value) } },
      ],
    }).compileComponents();
    const fixture = TestBed.createComponent(ConfirmDialog);
    await fixture.whenStable();
    return fixture;
  }

  it('names everything that goes and closes with true when confirmed', async () => {
    const fixture = await open({
      title: 'Remove the series CT, 120 slices?',
      message: 'These go with it:',
      items: ['Structure Liver', 'Plan Lateral approach, drafted on it'],
      confirmLabel: 'Remove series',
    });
    const items = Array.from(
      (fixture.nativeElement as HTMLElement).querySelectorAll('.confirm-items li'),
    ).map((item) => item.textContent?.trim());
    expect(items).toEqual(['Structure Liver', 'Plan Lateral approach, drafted on it']);
    buttonNamed(fixture, 'Remove series').click();
    expect(closedWith).toEqual([true]);
  });

  it('asks for a reason: confirms only with one, and closes with it trimmed', async () => {
    const fixture = await open({
      title: 'Withdraw the panel?',
      message: 'Kept with your reason.',
      confirmLabel: 'Withdraw panel',
      reasonLabel: 'Reason for the withdrawal',
    });
    const confirm = buttonNamed(fixture, 'Withdraw panel');
    expect(confirm.disabled).toBe(true);
    typeInto(fixture, '#confirm-reason', '   ');
    await fixture.whenStable();
    expect(confirm.disabled).toBe(true);
    expect(textOf(fixture)).toContain('Give the reason');
    typeInto(fixture, '#confirm-reason', '  Sample of another patient ');
    await fixture.whenStable();
    expect(confirm.disabled).toBe(false);
    confirm.click();
    expect(closedWith).toEqual(['Sample of another patient']);
  });

  it('shows why the action is blocked, with the confirmation disabled', async () => {
    const fixture = await open({
      title: 'Remove the series?',
      message: 'These go with it:',
      items: ['Structure Liver'],
      confirmLabel: 'Remove series',
      blockedReason:
        'It cannot be removed: assessments ran on it (plan Lateral approach: 1 assessment).',
    });
    expect(textOf(fixture)).toContain('plan Lateral approach: 1 assessment');
    expect(buttonNamed(fixture, 'Remove series').disabled).toBe(true);
    buttonNamed(fixture, 'Remove series').click();
    expect(closedWith).toEqual([]);
  });
});
