import { ChangeDetectionStrategy, Component, inject, input } from '@angular/core';
import { ControlContainer, ReactiveFormsModule, type ValidationErrors } from '@angular/forms';
import { MatError, MatFormField, MatLabel } from '@angular/material/form-field';
import { MatInput } from '@angular/material/input';
import { MatRadioButton, MatRadioGroup } from '@angular/material/radio';
import { MatOption, MatSelect } from '@angular/material/select';
import { FieldError } from '../core/field-error';
import { diagnosisOptions, ecogOptions, findingOptions, sexOptions } from './case-form-options';

/**
 * The clinical fields of a case (year of birth, sex, diagnosis, ECOG, findings), shared by the
 * new-case dialog and the Summary form. The controls belong to the parent's form group, found
 * through the ControlContainer, so both forms keep their own shape, validation and submit.
 */
@Component({
  selector: 'em-case-clinical-fields',
  imports: [
    ReactiveFormsModule,
    MatFormField,
    MatLabel,
    MatError,
    MatInput,
    MatSelect,
    MatOption,
    MatRadioGroup,
    MatRadioButton,
    FieldError,
  ],
  viewProviders: [
    { provide: ControlContainer, useFactory: () => inject(ControlContainer, { skipSelf: true }) },
  ],
  templateUrl: './case-clinical-fields.html',
  styleUrl: './case-clinical-fields.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CaseClinicalFields {
  /** Prefix of the element ids, unique on the page ("new-case", "details"). */
  readonly idPrefix = input.required<string>();

  private readonly container = inject(ControlContainer, { skipSelf: true });
  protected readonly sexOptions = sexOptions;
  protected readonly diagnosisOptions = diagnosisOptions;
  protected readonly ecogOptions = ecogOptions;
  protected readonly findingOptions = findingOptions;

  protected isInvalid(name: string): boolean {
    return this.container.control?.get(name)?.invalid ?? false;
  }

  protected errorsOf(name: string): ValidationErrors | null {
    return this.container.control?.get(name)?.errors ?? null;
  }
}
