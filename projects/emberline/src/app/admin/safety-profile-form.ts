import {
  FormArray,
  FormControl,
  FormGroup,
  Validators,
  type AbstractControl,
  type ValidationErrors,
} from '@angular/forms';
import {
  safetyProfileBodySchema,
  structureKindLabels,
  structureRuleSchema,
  thresholdSourceSchema,
  type SafetyProfileBody,
  type SafetyProfileView,
  type StructureKind,
  type StructureRule,
} from '@emberline/shared';
import { zodValidator } from '../core/zod-validator';

export interface StructureRuleControls {
  kind: FormControl<StructureKind | null>;
  minimumClearanceMm: FormControl<number | null>;
  isCritical: FormControl<boolean>;
  source: FormControl<string>;
}
export type StructureRuleForm = FormGroup<StructureRuleControls>;

/** The single-number thresholds, each beside the text that says where it comes from. */
export type ThresholdField =
  | 'marginTargetMm'
  | 'marginMinimumMm'
  | 'maximumAngulationDeg'
  | 'minimumParenchymaBeforeTumourMm'
  | 'maximumCapsuleCrossings'
  | 'physicsToleranceMm'
  | 'rehearsalToleranceMm';
export type ThresholdSourceField =
  | 'marginTargetSource'
  | 'marginMinimumSource'
  | 'angulationSource'
  | 'parenchymaSource'
  | 'capsuleSource'
  | 'physicsToleranceSource'
  | 'rehearsalToleranceSource';

export interface ThresholdDefinition {
  field: ThresholdField;
  sourceField: ThresholdSourceField;
  label: string;
  sourceLabel: string;
  unit: string;
  hint: string;
  step: string;
}

export const thresholdDefinitions: readonly ThresholdDefinition[] = [
  {
    field: 'marginTargetMm',
    sourceField: 'marginTargetSource',
    label: 'Margin target (mm)',
    sourceLabel: 'Source of the margin target',
    unit: 'mm',
    hint: 'Minimal ablative margin the zone should reach around every tumour',
    step: 'any',
  },
  {
    field: 'marginMinimumMm',
    sourceField: 'marginMinimumSource',
    label: 'Margin minimum (mm)',
    sourceLabel: 'Source of the margin minimum',
    unit: 'mm',
    hint: 'Below this margin the plan is not acceptable; 0 means tumour left outside the zone',
    step: 'any',
  },
  {
    field: 'maximumAngulationDeg',
    sourceField: 'angulationSource',
    label: 'Maximum angulation (°)',
    sourceLabel: 'Source of the angulation limit',
    unit: '°',
    hint: 'Steepest path angle from the axial plane the team accepts',
    step: 'any',
  },
  {
    field: 'minimumParenchymaBeforeTumourMm',
    sourceField: 'parenchymaSource',
    label: 'Parenchyma before the tumour (mm)',
    sourceLabel: 'Source of the parenchyma rule',
    unit: 'mm',
    hint: 'Normal liver the path should cross before it reaches the tumour',
    step: 'any',
  },
  {
    field: 'maximumCapsuleCrossings',
    sourceField: 'capsuleSource',
    label: 'Capsule crossings per applicator',
    sourceLabel: 'Source of the capsule rule',
    unit: 'crossings',
    hint: 'More crossings than this carry a caution',
    step: '1',
  },
  {
    field: 'physicsToleranceMm',
    sourceField: 'physicsToleranceSource',
    label: 'Physics zone tolerance (mm)',
    sourceLabel: 'Source of the physics zone tolerance',
    unit: 'mm',
    hint: "Largest error of the heating model against a profile's own zone table for which its zone may decide the verdict",
    step: 'any',
  },
  {
    field: 'rehearsalToleranceMm',
    sourceField: 'rehearsalToleranceSource',
    label: 'Rehearsal tip tolerance (mm)',
    sourceLabel: 'Source of the rehearsal tolerance',
    unit: 'mm',
    hint: 'Robot-assisted tip error in the insertion rehearsal above which the verdict carries a caution',
    step: 'any',
  },
];

const shape = safetyProfileBodySchema.shape;
const ruleShape = structureRuleSchema.shape;

export type SafetyProfileForm = ReturnType<typeof safetyProfileForm>;

/** The form of a safety profile, filled from `profile` (or empty); names are the API's. */
export function safetyProfileForm(
  profile: Omit<SafetyProfileView, 'id' | 'version' | 'createdAt' | 'updatedAt'> | null,
) {
  const number = (
    field: ThresholdField | 'heatSinkDiameterMm' | 'heatSinkDistanceMm',
    initial: number | null = profile?.[field] ?? null,
  ) => new FormControl<number | null>(initial, [Validators.required, zodValidator(shape[field])]);
  const source = (value: string | undefined) =>
    new FormControl(value ?? '', {
      nonNullable: true,
      validators: [Validators.required, zodValidator(thresholdSourceSchema)],
    });
  return new FormGroup({
    name: new FormControl(profile?.name ?? '', {
      nonNullable: true,
      validators: [Validators.required, zodValidator(shape.name)],
    }),
    structureRules: new FormArray<StructureRuleForm>(
      (profile?.structureRules ?? []).map((rule) => structureRuleForm(rule)),
      distinctKinds,
    ),
    marginTargetMm: number('marginTargetMm'),
    marginTargetSource: source(profile?.marginTargetSource),
    marginMinimumMm: number('marginMinimumMm'),
    marginMinimumSource: source(profile?.marginMinimumSource),
    heatSinkDiameterMm: number('heatSinkDiameterMm'),
    heatSinkDistanceMm: number('heatSinkDistanceMm'),
    heatSinkKinds: new FormControl<StructureKind[]>(profile?.heatSinkKinds ?? [], {
      nonNullable: true,
    }),
    heatSinkSource: source(profile?.heatSinkSource),
    maximumAngulationDeg: number('maximumAngulationDeg'),
    angulationSource: source(profile?.angulationSource),
    minimumParenchymaBeforeTumourMm: number('minimumParenchymaBeforeTumourMm'),
    parenchymaSource: source(profile?.parenchymaSource),
    maximumCapsuleCrossings: number('maximumCapsuleCrossings'),
    capsuleSource: source(profile?.capsuleSource),
    // A profile started from nothing shows the shared schema's default tolerance and its source.
    physicsToleranceMm: number(
      'physicsToleranceMm',
      profile ? profile.physicsToleranceMm : shape.physicsToleranceMm.parse(undefined),
    ),
    physicsToleranceSource: source(
      profile ? profile.physicsToleranceSource : shape.physicsToleranceSource.parse(undefined),
    ),
    rehearsalToleranceMm: number(
      'rehearsalToleranceMm',
      profile ? profile.rehearsalToleranceMm : shape.rehearsalToleranceMm.parse(undefined),
    ),
    rehearsalToleranceSource: source(
      profile ? profile.rehearsalToleranceSource : shape.rehearsalToleranceSource.parse(undefined),
    ),
    isDefault: new FormControl(profile?.isDefault ?? false, { nonNullable: true }),
  });
}

export function structureRuleForm(rule?: Partial<StructureRule>): StructureRuleForm {
  return new FormGroup<StructureRuleControls>({
    kind: new FormControl<StructureKind | null>(rule?.kind ?? null, Validators.required),
    minimumClearanceMm: new FormControl<number | null>(rule?.minimumClearanceMm ?? null, [
      Validators.required,
      zodValidator(ruleShape.minimumClearanceMm),
    ]),
    isCritical: new FormControl(rule?.isCritical ?? false, { nonNullable: true }),
    source: new FormControl(rule?.source ?? '', {
      nonNullable: true,
      validators: [Validators.required, zodValidator(thresholdSourceSchema)],
    }),
  });
}

/** The body for the API, or null while a required number or kind is empty. */
export function safetyProfileBody(
  form: SafetyProfileForm,
): Omit<SafetyProfileBody, 'isDefault'> | null {
  const value = form.getRawValue();
  const structureRules: StructureRule[] = [];
  for (const { kind, minimumClearanceMm, isCritical, source } of value.structureRules) {
    if (kind === null || minimumClearanceMm === null) return null;
    structureRules.push({ kind, minimumClearanceMm, isCritical, source });
  }
  const {
    marginTargetMm,
    marginMinimumMm,
    heatSinkDiameterMm,
    heatSinkDistanceMm,
    maximumAngulationDeg,
    minimumParenchymaBeforeTumourMm,
    maximumCapsuleCrossings,
    physicsToleranceMm,
    rehearsalToleranceMm,
  } = value;
  if (
    marginTargetMm === null ||
    marginMinimumMm === null ||
    heatSinkDiameterMm === null ||
    heatSinkDistanceMm === null ||
    maximumAngulationDeg === null ||
    minimumParenchymaBeforeTumourMm === null ||
    maximumCapsuleCrossings === null ||
    physicsToleranceMm === null ||
    rehearsalToleranceMm === null
  ) {
    return null;
  }
  return {
    name: value.name,
    structureRules,
    marginTargetMm,
    marginTargetSource: value.marginTargetSource,
    marginMinimumMm,
    marginMinimumSource: value.marginMinimumSource,
    heatSinkDiameterMm,
    heatSinkDistanceMm,
    heatSinkKinds: value.heatSinkKinds,
    heatSinkSource: value.heatSinkSource,
    maximumAngulationDeg,
    angulationSource: value.angulationSource,
    minimumParenchymaBeforeTumourMm,
    parenchymaSource: value.parenchymaSource,
    maximumCapsuleCrossings,
    capsuleSource: value.capsuleSource,
    physicsToleranceMm,
    physicsToleranceSource: value.physicsToleranceSource,
    rehearsalToleranceMm,
    rehearsalToleranceSource: value.rehearsalToleranceSource,
  };
}

/** The shared schema's rule that a kind has one rule at most: `{ duplicateKinds: { index: message } }`. */
function distinctKinds(control: AbstractControl): ValidationErrors | null {
  const rules = (control as FormArray<StructureRuleForm>).getRawValue();
  const firstIndexOf = new Map<StructureKind, number>();
  const duplicateKinds: Record<number, string> = {};
  rules.forEach(({ kind }, index) => {
    if (kind === null) return;
    const firstIndex = firstIndexOf.get(kind);
    if (firstIndex === undefined) firstIndexOf.set(kind, index);
    else {
      duplicateKinds[index] =
        `${structureKindLabels[kind]} has a rule already (rule ${firstIndex + 1}); keep one rule a kind.`;
    }
  });
  return Object.keys(duplicateKinds).length ? { duplicateKinds } : null;
}
