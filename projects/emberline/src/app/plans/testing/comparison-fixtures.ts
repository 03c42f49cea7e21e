/**
 * Invented plans, assessments and a safety profile for the comparison's tests: figures made up
 * for two plans on one invented series, no patient data and no device's data.
 */
import type {
  ApplicatorSafety,
  AssessmentInputsView,
  AssessmentResult,
  AssessmentView,
  PlanView,
  SafetyProfileView,
} from '@emberline/shared';

export const seriesId = 'b1f0c7de-2a34-4c5b-9d6e-7f8091a2b3c4';
export const tumourId = 'c2a1d8ef-3b45-4d6c-8e7f-809102b3c4d5';
export const safetyProfileId = 'd3b2e9f0-4c56-4e7d-9f80-91a213c4d5e6';

export function plan(id: string, name: string, status: PlanView['status'] = 'assessed'): PlanView {
  return {
    id,
    caseId: 'case-1',
    seriesId,
    name,
    status,
    // An axial needle from anterior to the tip at the origin (LPS mm).
    applicators: [
      {
        entry: [0, -60, 0],
        target: [0, 0, 0],
        profileId: 'profile-1',
        profileName: 'Invented probe',
        powerW: 60,
        timeS: 360,
      },
    ],
    notes: null,
    author: { id: 'user-1', displayName: 'Dr Invented' },
    createdAt: '2026-11-20T09:00:00.000Z',
    updatedAt: '2026-11-20T09:00:00.000Z',
  };
}

export function applicator(overrides: Partial<ApplicatorSafety>): ApplicatorSafety {
  return {
    pathLengthMm: 100,
    workingLengthMm: 150,
    angulationDeg: 10,
    clearances: [],
    traversed: [],
    capsuleCrossings: 1,
    parenchymaBeforeTumourMm: 20,
    ...overrides,
  };
}

/** An invented safety profile: 5 mm from vessels, 10 mm from the gallbladder, 5 mm margin. */
export function safetyProfile(version: number): SafetyProfileView {
  return {
    id: safetyProfileId,
    name: 'Invented thresholds',
    version,
    isDefault: true,
    structureRules: [
      { kind: 'portal-vein', minimumClearanceMm: 5, isCritical: false, source: 'Invented' },
      { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: true, source: 'Invented' },
    ],
    marginTargetMm: 5,
    marginTargetSource: 'Invented',
    marginMinimumMm: 0,
    marginMinimumSource: 'Invented',
    heatSinkDiameterMm: 3,
    heatSinkDistanceMm: 10,
    heatSinkKinds: ['portal-vein', 'hepatic-vein'],
    heatSinkSource: 'Invented',
    maximumAngulationDeg: 40,
    angulationSource: 'Invented',
    minimumParenchymaBeforeTumourMm: 10,
    parenchymaSource: 'Invented',
    maximumCapsuleCrossings: 1,
    capsuleSource: 'Invented',
    physicsToleranceMm: 2,
    physicsToleranceSource: 'Invented',
    rehearsalToleranceMm: 2,
    rehearsalToleranceSource: 'common practice',
    createdAt: '2026-11-01T09:00:00.000Z',
    updatedAt: '2026-11-01T09:00:00.000Z',
  };
}

export function inputs(safetyProfileVersion: number): AssessmentInputsView {
  return {
    safetyProfile: {
      id: safetyProfileId,
      name: 'Invented thresholds',
      version: safetyProfileVersion,
      minimumClearanceMm: Object.fromEntries(
        safetyProfile(safetyProfileVersion)
          .structureRules.filter((rule) => rule.minimumClearanceMm > 0)
          .map((rule) => [rule.kind, rule.minimumClearanceMm]),
      ),
      marginTargetMm: safetyProfile(safetyProfileVersion).marginTargetMm,
      marginMinimumMm: safetyProfile(safetyProfileVersion).marginMinimumMm,
    },
    applicatorProfiles: [
      {
        id: 'profile-1',
        name: 'Invented probe',
        version: 2,
        zoneTableSource: 'ex-vivo',
        zoneTableReference: 'Invented bench series',
      },
    ],
    engineVersion: '1.1.0',
  };
}

/** Plan A: clear of the portal vein, 8 mm from the gallbladder, the tumour covered. */
export const resultA: AssessmentResult = {
  engineVersion: '1.1.0',
  applicators: [
    applicator({
      pathLengthMm: 112.46,
      angulationDeg: 12.3,
      clearances: [
        { kind: 'portal-vein', minDistanceMm: 12.4, lowerBoundMm: 11.6, atMm: 60.2 },
        { kind: 'gallbladder', minDistanceMm: 8, lowerBoundMm: 7.2, atMm: 40 },
      ],
      traversed: [{ kind: 'liver', lengthMm: 62, critical: false }],
    }),
  ],
  zones: [
    {
      model: 'table',
      volumeMl: 24.5,
      tumours: [
        {
          structureId: tumourId,
          volumeMl: 3.2,
          coveredPercent: 100,
          minimalMarginMm: 6.2,
          minimalMarginLowerMm: 4.9,
          surfaceBelowTargetPercent: 35,
        },
      ],
      collateral: [{ kind: 'gallbladder', volumeMl: 0.12 }],
    },
  ],
  primaryZoneModel: 'table',
  heatSinks: [],
  verdict: {
    level: 'acceptable-with-cautions',
    reasons: [
      {
        rule: 'clearance',
        kind: 'gallbladder',
        value: 8,
        threshold: 10,
        severity: 'caution',
        message: 'The applicator passes 8.0 mm from the gallbladder.',
      },
    ],
  },
};

/** Plan B: through the gallbladder, near the portal vein, part of the tumour outside the zone. */
export const resultB: AssessmentResult = {
  engineVersion: '1.1.0',
  applicators: [
    applicator({
      pathLengthMm: 96.2,
      angulationDeg: 12.3,
      clearances: [{ kind: 'portal-vein', minDistanceMm: 3.1, atMm: 71.5 }],
      traversed: [
        { kind: 'liver', lengthMm: 48, critical: false },
        { kind: 'gallbladder', lengthMm: 4.2, critical: true },
      ],
    }),
  ],
  zones: [
    {
      model: 'table',
      volumeMl: 20.1,
      tumours: [
        {
          structureId: tumourId,
          volumeMl: 3.2,
          coveredPercent: 91.5,
          minimalMarginMm: -2.4,
          surfaceBelowTargetPercent: 80,
        },
      ],
      collateral: [],
    },
  ],
  primaryZoneModel: 'table',
  heatSinks: [{ kind: 'hepatic-vein', diameterMm: 6.5, distanceMm: 3.2 }],
  verdict: {
    level: 'not-acceptable',
    reasons: [
      {
        rule: 'critical-traversal',
        kind: 'gallbladder',
        value: 4.2,
        threshold: 0,
        severity: 'refusal',
        message: 'The applicator runs 4.2 mm through the gallbladder.',
      },
      {
        rule: 'clearance',
        kind: 'portal-vein',
        value: 3.1,
        threshold: 5,
        severity: 'caution',
        message: 'The applicator passes 3.1 mm from the portal vein.',
      },
      {
        rule: 'tumour-coverage',
        kind: 'tumour',
        value: 91.5,
        threshold: 100,
        severity: 'refusal',
        message: 'The tumour is 91.5 % covered by the table zone.',
      },
      {
        rule: 'margin-minimum',
        kind: 'tumour',
        value: -2.4,
        threshold: 0,
        severity: 'refusal',
        message: 'The tumour: minimal ablative margin −2.4 mm in the table zone.',
      },
    ],
  },
};

export function done(
  id: string,
  planId: string,
  result: AssessmentResult,
  overrides: Partial<AssessmentView> = {},
): AssessmentView {
  return {
    id,
    planId,
    status: 'done',
    progress: 1,
    inputs: inputs(3),
    result,
    createdAt: '2026-11-20T10:00:00.000Z',
    updatedAt: '2026-11-20T10:01:00.000Z',
    ...overrides,
  };
}
