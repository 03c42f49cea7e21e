/**
 * What the plan tests need besides the demo: a series row on a case (the plan routes read only
 * which case a series belongs to, never its voxels, so no file is written for it) and plan and
 * profile bodies. Every value here is invented.
 */
import { randomUUID } from 'node:crypto';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { CreatePlan, SafetyProfileBody } from '@emberline/shared';
import { demoSafetyProfile } from '../../server/seeders/demo-plans';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { ImageSeries } from '../../server/src/modules/imaging/image-series.entity';
import { User } from '../../server/src/modules/users/user.entity';

/** An image series row of `caseId` uploaded by `uploaderId`: a 10 × 10 × 10 grid of 1 mm. */
export async function insertSeriesRow(
  orm: MikroORM,
  caseId: string,
  uploaderId: string,
): Promise<string> {
  const em = orm.em.fork();
  const series = new ImageSeries({
    clinicalCase: em.getReference(ClinicalCase, caseId, { wrapped: true }),
    uploadedBy: em.getReference(User, uploaderId, { wrapped: true }),
    modality: 'CT',
    dimensions: [10, 10, 10],
    spacingMm: [1, 1, 1],
    originLps: [0, 0, 0],
    direction: [
      [1, 0, 0],
      [0, 1, 0],
      [0, 0, 1],
    ],
    valueUnit: 'HU',
    rescaleApplied: { slope: 1, intercept: -1024, isUniform: true },
    valueMin: -1024,
    valueMax: 1000,
    windowCentre: 40,
    windowWidth: 400,
    seriesUid: `2.25.${BigInt(`0x${randomUUID().replaceAll('-', '')}`).toString()}`,
    studyUid: '2.25.1',
    frameOfReferenceUid: '2.25.2',
    storageKey: `volumes/${randomUUID()}.vol`,
    byteLength: 0,
    dicomHeader: { meta: {}, dataset: {} },
    deidentification: {
      patientIdentityRemoved: true,
      profile: 'DICOM PS3.15 Annex E Basic Application Level Confidentiality Profile',
      methodCodes: [],
      method: [],
      dateOption: 'shifted-per-case',
    },
  });
  em.persist(series);
  await em.flush();
  return series.id;
}

/** A one-applicator plan body: 40 mm along +x, within the demo microwave table (40–80 W, 180–600 s). */
export function planBody(
  seriesId: string,
  profileId: string,
  overrides: Partial<CreatePlan> = {},
): CreatePlan {
  return {
    name: 'Fixture plan',
    seriesId,
    applicators: [{ entry: [-70, 0, 0], target: [-30, 0, 0], profileId, powerW: 60, timeS: 360 }],
    ...overrides,
  };
}

/** The demo safety profile under another name. */
export function safetyBody(name: string, overrides: Partial<SafetyProfileBody> = {}) {
  return { ...demoSafetyProfile, name, isDefault: false, ...overrides };
}
