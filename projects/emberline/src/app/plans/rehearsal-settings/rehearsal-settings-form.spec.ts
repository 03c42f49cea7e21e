import { DEFAULT_REHEARSAL_SETTINGS } from '@emberline/shared';
import {
  rehearsalFieldHints,
  rehearsalSettingsForm,
  rehearsalSettingsOf,
} from './rehearsal-settings-form';

describe('rehearsalSettingsForm', () => {
  it('turns the kPa typed into the pascals the API stores, without a binary fraction’s tail', () => {
    const form = rehearsalSettingsForm(DEFAULT_REHEARSAL_SETTINGS);
    // 1.005 × 1000 is 1004.9999999999999 in IEEE 754 doubles; 1.005 kPa is 1005 Pa (SI).
    expect(1.005 * 1000).not.toBe(1005);
    form.controls.youngsModulusKPa.setValue(1.005);
    expect(rehearsalSettingsOf(form)?.material.youngsModulusPa).toBe(1005);
  });

  it('shows the stiffness at 6 kPa for the default 6000 Pa and reads it back unchanged', () => {
    const form = rehearsalSettingsForm(DEFAULT_REHEARSAL_SETTINGS);
    expect(form.controls.youngsModulusKPa.value).toBe(6);
    expect(rehearsalSettingsOf(form)).toEqual(DEFAULT_REHEARSAL_SETTINGS);
  });

  it('checks the stiffness in kPa against the shared rule in pascals (500 Pa to 100 kPa)', () => {
    const control = rehearsalSettingsForm(DEFAULT_REHEARSAL_SETTINGS).controls.youngsModulusKPa;
    const errorAt = (kPa: number) => {
      control.setValue(kPa);
      return control.errors;
    };
    expect(errorAt(0.5)).toBeNull();
    expect(errorAt(100)).toBeNull();
    expect(errorAt(0.49)).toEqual({ rule: 'At least 0.5 kPa' });
    expect(errorAt(100.1)).toEqual({ rule: 'At most 100 kPa' });
  });

  it('has no settings while a field is empty', () => {
    const form = rehearsalSettingsForm(DEFAULT_REHEARSAL_SETTINGS);
    form.controls.periodS.setValue(null);
    expect(form.controls.periodS.errors).toEqual({ required: true });
    expect(rehearsalSettingsOf(form)).toBeNull();
  });

  it('hints each field’s range from the shared schema and its default', () => {
    expect(rehearsalFieldHints.amplitudeMm).toBe('0 to 40 mm; default 12 mm');
    expect(rehearsalFieldHints.periodS).toBe('1.5 to 12 s; default 4 s');
    expect(rehearsalFieldHints.youngsModulusKPa).toBe('0.5 to 100 kPa; default 6 kPa');
    expect(rehearsalFieldHints.poissonRatio).toBe('0.3 to 0.49; default 0.45');
  });
});
