import type { ComponentFixture } from '@angular/core/testing';

/** Types into an input or textarea as the user would: sets the value and fires `input`. */
export function typeInto(fixture: ComponentFixture<unknown>, selector: string, text: string): void {
  const field = element<HTMLInputElement>(fixture, selector);
  field.value = text;
  field.dispatchEvent(new Event('input', { bubbles: true }));
  field.dispatchEvent(new Event('blur'));
}

/** Submits the form the way a press on Enter or the submit button does. */
export function submit(fixture: ComponentFixture<unknown>, selector = 'form'): void {
  element<HTMLFormElement>(fixture, selector).dispatchEvent(
    new Event('submit', { bubbles: true, cancelable: true }),
  );
}

export function element<T extends Element = HTMLElement>(
  fixture: ComponentFixture<unknown>,
  selector: string,
): T {
  const found = (fixture.nativeElement as HTMLElement).querySelector<T>(selector);
  if (!found) throw new Error(`Nothing matches ${selector}`);
  return found;
}

/** The first button whose text is exactly `label` (after trimming). */
export function buttonNamed(fixture: ComponentFixture<unknown>, label: string): HTMLButtonElement {
  const buttons = Array.from((fixture.nativeElement as HTMLElement).querySelectorAll('button'));
  const found = buttons.find((button) => button.textContent?.trim() === label);
  if (!found) throw new Error(`No button named ${label}`);
  return found;
}

export function textOf(fixture: ComponentFixture<unknown>): string {
  return ((fixture.nativeElement as HTMLElement).textContent ?? '').replace(/\s+/g, ' ');
}
