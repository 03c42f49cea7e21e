/**
 * The demo's applicator profiles, its default safety profile and three needle plans on the
 * invented CT of NLB-2026-014. Every value here is invented for the demo: the profiles are no
 * maker's data, the safety thresholds are defaults for a board to edit (each names where its
 * kind of value comes from), the plans are a scenario of our own on the invented anatomy of
 * sample-data/abdomen. None of it may inform a treatment; the treating team decides.
 */
import type { EntityManager } from '@mikro-orm/postgresql';
import {
  createApplicatorProfileSchema,
  safetyProfileBodySchema,
  type CreateApplicatorProfile,
  type CreatePlan,
  type SafetyProfileBody,
  type Vec3,
} from '@emberline/shared';
import type { Actor } from '../src/common/request-context';
import { ClinicalCase } from '../src/modules/cases/case.entity';
import { ImageSeries } from '../src/modules/imaging/image-series.entity';
import { ApplicatorProfile } from '../src/modules/plans/applicator-profile.entity';
import { NeedlePlan } from '../src/modules/plans/needle-plan.entity';
import { PlanService } from '../src/modules/plans/plan.service';
import { SafetyProfile } from '../src/modules/plans/safety-profile.entity';
import { loadSignedInUser } from '../src/modules/users/user.service';
import { demoImagingCaseCode } from './demo-imaging';

const inventedNote =
  'Invented demo values, not a maker’s data: for showing Emberline only, never for treatment.';

const row = (
  powerW: number,
  timeS: number,
  zoneLengthMm: number,
  zoneWidthMm: number,
  tipOffsetMm: number,
) => ({ powerW, timeS, zoneLengthMm, zoneWidthMm, tipOffsetMm });

export const demoMicrowaveProfileName = 'Demo microwave 14 G (invented)';
export const demoRadiofrequencyProfileName = 'Demo radiofrequency 17 G (invented)';

/** Two invented applicators; zones grow with power and time, 22–45 mm long. */
export const demoApplicatorProfiles: CreateApplicatorProfile[] = [
  {
    name: demoMicrowaveProfileName,
    modality: 'microwave',
    gaugeG: 14,
    workingLengthMm: 150,
    activeLengthMm: 20,
    zoneTable: [
      row(40, 180, 22, 15, 5),
      row(40, 360, 27, 19, 6),
      row(40, 600, 31, 22, 7),
      row(60, 180, 27, 19, 6),
      row(60, 360, 33, 25, 7),
      row(60, 600, 38, 29, 8),
      row(80, 180, 31, 22, 7),
      row(80, 360, 38, 29, 8),
      row(80, 600, 45, 35, 9),
    ],
    zoneTableSource: 'manufacturer',
    zoneTableReference: 'Invented data sheet for the demo; not a real device.',
    notes: inventedNote,
  },
  {
    name: demoRadiofrequencyProfileName,
    modality: 'radiofrequency',
    gaugeG: 17,
    workingLengthMm: 150,
    activeLengthMm: 20,
    zoneTable: [
      row(100, 360, 22, 16, 9),
      row(100, 720, 26, 20, 9),
      row(150, 360, 26, 20, 9),
      row(150, 720, 30, 24, 9),
      row(200, 360, 30, 24, 9),
      row(200, 720, 35, 28, 9),
    ],
    zoneTableSource: 'ex-vivo',
    zoneTableReference: 'Invented bench series for the demo; not a real device.',
    notes: inventedNote,
  },
];

const vesselClearance =
  '“Adjacent to large vessels” is often taken as < 5 mm (Huang et al., Eur J Radiol ' +
  '2014;83:552); the 5 mm threshold itself is common practice.';
const hollowOrganClearance = '10 mm from bowel or gallbladder: common practice, from memory.';

export const demoSafetyProfileName = 'Demo default thresholds (invented)';

/**
 * The invented default safety profile. Each threshold names its published source in its
 * `…Source` field (Wang X et al., Cardiovasc Intervent Radiol 2013; Shady W et al., J Vasc Interv
 * Radiol 2018; Lu DSK et al., AJR 2002; Huang S et al., Eur J Radiol 2014) or says "common
 * practice"; where the literature gives no figure the value is an Emberline default, marked so.
 */
export const demoSafetyProfile: SafetyProfileBody = {
  name: demoSafetyProfileName,
  structureRules: [
    { kind: 'portal-vein', minimumClearanceMm: 5, isCritical: false, source: vesselClearance },
    { kind: 'hepatic-vein', minimumClearanceMm: 5, isCritical: false, source: vesselClearance },
    { kind: 'hepatic-artery', minimumClearanceMm: 5, isCritical: false, source: vesselClearance },
    {
      kind: 'bile-duct',
      minimumClearanceMm: 5,
      isCritical: true,
      source: 'Central bile ducts are kept clear of the path: common practice, from memory.',
    },
    { kind: 'gallbladder', minimumClearanceMm: 10, isCritical: true, source: hollowOrganClearance },
    { kind: 'bowel', minimumClearanceMm: 10, isCritical: true, source: hollowOrganClearance },
    { kind: 'stomach', minimumClearanceMm: 10, isCritical: true, source: hollowOrganClearance },
    {
      kind: 'lung',
      minimumClearanceMm: 10,
      isCritical: true,
      source: 'The pleura is kept clear of the path (pneumothorax): common practice, from memory.',
    },
    {
      kind: 'heart',
      minimumClearanceMm: 10,
      isCritical: true,
      source: 'Common practice, from memory.',
    },
    {
      kind: 'kidney',
      minimumClearanceMm: 5,
      isCritical: true,
      source: 'Common practice, from memory.',
    },
    {
      kind: 'bone',
      minimumClearanceMm: 2,
      isCritical: true,
      source: 'An applicator cannot pass bone (ribs): common practice; 2 mm from memory.',
    },
  ],
  marginTargetMm: 5,
  marginTargetSource:
    'At least 5 mm, ideally 10 mm: common practice. Local progression falls with margin ' +
    '(Wang X et al., Cardiovasc Intervent Radiol 2013;36:166); a margin ≤ 5 mm strongly ' +
    'predicts it (Shady W et al., J Vasc Interv Radiol 2018).',
  marginMinimumMm: 0,
  marginMinimumSource:
    'Tumour outside the zone is not acceptable: common practice; 0 mm margins had the worst ' +
    'local control (Wang X et al., Cardiovasc Intervent Radiol 2013;36:166).',
  heatSinkDiameterMm: 3,
  heatSinkDistanceMm: 10,
  heatSinkKinds: ['portal-vein', 'hepatic-vein', 'hepatic-artery'],
  heatSinkSource:
    'Heat sink at 73 % of veins > 3 mm, none below 3 mm (Lu DSK et al., AJR 2002;178:47); ' +
    '“within 10 mm of the zone” is an Emberline default.',
  maximumAngulationDeg: 40,
  angulationSource:
    'Steeper paths leave the axial plane the needle is followed in: common practice; 40° is ' +
    'an Emberline default, from memory.',
  minimumParenchymaBeforeTumourMm: 10,
  parenchymaSource:
    'About 10 mm of normal liver before the tumour (bleeding, seeding): common practice, ' +
    'from memory.',
  maximumCapsuleCrossings: 1,
  capsuleSource: 'One capsule puncture per applicator: common practice.',
  physicsToleranceMm: 2,
  physicsToleranceSource:
    'Team choice for the demo: the heating model must predict a zone-table row it was not ' +
    'fitted to within 2 mm (leave-one-out) before its zone decides the verdict.',
  rehearsalToleranceMm: 2,
  rehearsalToleranceSource:
    'Common practice: robot-assisted needle placement aims at a tip within about 2 mm of the ' +
    'target; the rehearsal is a simulation estimate.',
  isDefault: true,
};

/**
 * Adds what is missing of the demo profiles (by name); the safety profile becomes the default
 * only when there is none. Answers true when it added anything.
 */
export async function seedDemoProfiles(em: EntityManager): Promise<boolean> {
  let isChanged = false;
  for (const demo of demoApplicatorProfiles) {
    if (await em.count(ApplicatorProfile, { name: demo.name })) continue;
    const body = createApplicatorProfileSchema.parse(demo);
    const profile = new ApplicatorProfile(body);
    profile.notes = body.notes ?? null;
    em.persist(profile);
    isChanged = true;
  }
  if (!(await em.count(SafetyProfile, { name: demoSafetyProfile.name }))) {
    const body = safetyProfileBodySchema.parse(demoSafetyProfile);
    const profile = new SafetyProfile(body);
    profile.isDefault = (await em.count(SafetyProfile, { isDefault: true })) === 0;
    em.persist(profile);
    isChanged = true;
  }
  await em.flush();
  return isChanged;
}

interface DemoPlan {
  name: string;
  profileName: string;
  powerW: number;
  timeS: number;
  /** LPS, millimetres, on the invented CT. */
  entry: Vec3;
  target: Vec3;
  notes: string;
  isSubmitted: boolean;
}

/**
 * Three invented plans on the invented CT (sample-data/abdomen: segment VIII tumour centred at
 * (−32, −16, 22) r 12 mm, segment VI tumour at (−38, 18, −2) r 9 mm, LPS mm). Each tip lies
 * beyond the tumour centre by the zone's tip offset, so the zone is centred on the tumour.
 * Entries are on the skin of the invented body outline.
 */
export const demoPlans: DemoPlan[] = [
  {
    name: 'Anterior subcostal, segment VIII',
    profileName: demoMicrowaveProfileName,
    powerW: 80,
    timeS: 600,
    entry: [-32, -50, 0],
    target: [-32, -8.4, 26.9],
    notes:
      'Invented demo plan. Below the ribs, angled towards the head; nearest structures about ' +
      '8 mm or more from the path.',
    isSubmitted: false,
  },
  {
    name: 'Right lateral, segment VI, past the right hepatic vein',
    profileName: demoRadiofrequencyProfileName,
    powerW: 200,
    timeS: 720,
    entry: [-70, -12, -7],
    target: [-31.5, 24.1, -1],
    notes:
      'Invented demo plan. The path passes about 2 mm from the right hepatic vein, a vessel ' +
      'wider than 3 mm near the zone.',
    isSubmitted: false,
  },
  {
    name: 'Right intercostal, segment VIII',
    profileName: demoMicrowaveProfileName,
    powerW: 60,
    timeS: 600,
    entry: [-72, -3, 13],
    target: [-24.6, -18.4, 23.7],
    notes:
      'Invented demo plan. Between two ribs; the smaller zone leaves a thinner margin than ' +
      'the anterior plan.',
    isSubmitted: true,
  },
];

/**
 * When NLB-2026-014 has its CT and no plan yet: drafts the demo plans through `PlanService`
 * (the route's own rules) as the case's presenter, and submits the one so marked. Needs
 * `seedDemoProfiles` first. Answers true when it did, false when there was nothing to do.
 */
export async function seedDemoPlans(em: EntityManager): Promise<boolean> {
  const found = await em.fork().findOne(ClinicalCase, { caseCode: demoImagingCaseCode });
  if (!found) return false;
  const series = await em
    .fork()
    .findOne(ImageSeries, { clinicalCase: found.id }, { orderBy: { createdAt: 'asc' } });
  if (!series) return false;
  if (await em.fork().count(NeedlePlan, { clinicalCase: found.id })) return false;
  const profiles = await em.fork().find(ApplicatorProfile, {
    name: { $in: demoApplicatorProfiles.map((profile) => profile.name) },
  });
  const profileIds = new Map(profiles.map((profile) => [profile.name, profile.id]));
  const presenter = await loadSignedInUser(em.fork(), found.presenter.id, 'local');
  if (!presenter) throw new Error('the demo case has no active presenter');
  const actor: Actor = { id: presenter.id, email: presenter.email, ip: null };
  for (const demo of demoPlans) {
    const profileId = profileIds.get(demo.profileName);
    if (!profileId) throw new Error(`seed the demo profiles first: ${demo.profileName} is missing`);
    const body: CreatePlan = {
      name: demo.name,
      seriesId: series.id,
      applicators: [
        {
          entry: demo.entry,
          target: demo.target,
          profileId,
          powerW: demo.powerW,
          timeS: demo.timeS,
        },
      ],
      notes: demo.notes,
    };
    const plan = await new PlanService(em.fork()).create(presenter, actor, found.id, body);
    if (demo.isSubmitted) {
      await new PlanService(em.fork()).update(presenter, actor, plan.id, { status: 'submitted' });
    }
  }
  return true;
}
