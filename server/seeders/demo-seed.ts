import type { EntityManager } from '@mikro-orm/postgresql';
import type { Role, Specialty } from '@emberline/shared';
import { Board } from '../src/modules/boards/board.entity';
import { BoardMembership } from '../src/modules/boards/board-membership.entity';
import { ClinicalCase } from '../src/modules/cases/case.entity';
import { LabPanel } from '../src/modules/cases/lab-panel.entity';
import { Lesion } from '../src/modules/cases/lesion.entity';
import { hashPassword } from '../src/modules/users/password';
import { User } from '../src/modules/users/user.entity';

/** The demo's one password (README); demo only. */
export const demoPassword = 'ember-demo-2026';

interface DemoUser {
  email: string;
  displayName: string;
  roles: Role[];
  boards: { board: 'north' | 'south'; specialty: Specialty }[];
}

/** An invented hospital; every name and value below is made up for the demo. */
export const demoUsers: DemoUser[] = [
  {
    email: 'admin@emberline.test',
    displayName: 'Ada Okafor',
    roles: ['administrator'],
    boards: [],
  },
  {
    email: 'presenter@emberline.test',
    displayName: 'Dr Priya Raman',
    roles: ['presenting-physician'],
    boards: [{ board: 'north', specialty: 'hepatology' }],
  },
  {
    email: 'member@emberline.test',
    displayName: 'Dr Tomas Lind',
    roles: ['board-member'],
    boards: [{ board: 'north', specialty: 'diagnostic-radiology' }],
  },
  {
    email: 'proceduralist@emberline.test',
    displayName: 'Dr Mei Tanaka',
    roles: ['proceduralist'],
    boards: [{ board: 'north', specialty: 'interventional-radiology' }],
  },
  {
    email: 'coordinator@emberline.test',
    displayName: 'Grace Mensah',
    roles: ['nurse-coordinator'],
    boards: [{ board: 'north', specialty: 'nursing' }],
  },
  {
    email: 'south@emberline.test',
    displayName: 'Dr Jonas Weber',
    roles: ['board-member'],
    boards: [{ board: 'south', specialty: 'hepatobiliary-surgery' }],
  },
];

interface DemoCase {
  caseCode: string;
  board: 'north' | 'south';
  yearOfBirth: number;
  sex: 'female' | 'male';
  primaryDiagnosis: 'hcc' | 'crlm' | 'icc' | 'other';
  status: 'draft' | 'ready-for-board' | 'decided';
  ecog: number;
  lesions: {
    segment: 'I' | 'II' | 'III' | 'IV' | 'V' | 'VI' | 'VII' | 'VIII';
    diameterMm: number;
    kind: 'hcc' | 'metastasis' | 'cholangiocarcinoma';
  }[];
  labs: {
    bilirubinMgDl: number;
    albuminGDl: number;
    inr: number;
    creatinineMgDl: number;
    sodium: number;
    platelets: number;
    ascites: 'none' | 'mild';
  };
}

const demoCases: DemoCase[] = [
  {
    caseCode: 'NLB-2026-014',
    board: 'north',
    yearOfBirth: 1958,
    sex: 'male',
    primaryDiagnosis: 'hcc',
    status: 'ready-for-board',
    ecog: 0,
    lesions: [
      { segment: 'VIII', diameterMm: 24, kind: 'hcc' },
      { segment: 'VI', diameterMm: 18, kind: 'hcc' },
    ],
    labs: {
      bilirubinMgDl: 1.1,
      albuminGDl: 3.8,
      inr: 1.1,
      creatinineMgDl: 0.9,
      sodium: 139,
      platelets: 142,
      ascites: 'none',
    },
  },
  {
    caseCode: 'NLB-2026-019',
    board: 'north',
    yearOfBirth: 1966,
    sex: 'female',
    primaryDiagnosis: 'crlm',
    status: 'draft',
    ecog: 1,
    lesions: [
      { segment: 'IV', diameterMm: 18, kind: 'metastasis' },
      { segment: 'VI', diameterMm: 12, kind: 'metastasis' },
    ],
    labs: {
      bilirubinMgDl: 0.6,
      albuminGDl: 4.1,
      inr: 1.0,
      creatinineMgDl: 0.8,
      sodium: 141,
      platelets: 228,
      ascites: 'none',
    },
  },
  {
    caseCode: 'NLB-2026-022',
    board: 'north',
    yearOfBirth: 1949,
    sex: 'male',
    primaryDiagnosis: 'hcc',
    status: 'decided',
    ecog: 1,
    lesions: [{ segment: 'VIII', diameterMm: 31, kind: 'hcc' }],
    labs: {
      bilirubinMgDl: 2.3,
      albuminGDl: 3.1,
      inr: 1.4,
      creatinineMgDl: 1.2,
      sodium: 134,
      platelets: 88,
      ascites: 'mild',
    },
  },
  {
    caseCode: 'SLB-2026-007',
    board: 'south',
    yearOfBirth: 1971,
    sex: 'female',
    primaryDiagnosis: 'icc',
    status: 'ready-for-board',
    ecog: 0,
    lesions: [{ segment: 'V', diameterMm: 27, kind: 'cholangiocarcinoma' }],
    labs: {
      bilirubinMgDl: 0.8,
      albuminGDl: 4.0,
      inr: 1.0,
      creatinineMgDl: 0.7,
      sodium: 140,
      platelets: 250,
      ascites: 'none',
    },
  },
];

/** Seeds the demo once; a second run finds the administrator and changes nothing. */
export async function seedDemo(em: EntityManager, now = new Date()): Promise<boolean> {
  if (await em.count(User, { email: 'admin@emberline.test' })) return false;
  const boards = {
    north: new Board('North Liver Board', 'Weekly hepatobiliary board of the invented North site.'),
    south: new Board('South Liver Board', 'Weekly hepatobiliary board of the invented South site.'),
  };
  em.persist(Object.values(boards));
  const passwordHash = await hashPassword(demoPassword);
  const users = new Map<string, User>();
  for (const demo of demoUsers) {
    const user = new User(demo.email, demo.displayName);
    user.roles = demo.roles;
    user.passwordHash = passwordHash;
    users.set(demo.email, user);
    em.persist(user);
    for (const membership of demo.boards) {
      em.persist(
        new BoardMembership(
          em.getReference(Board, boards[membership.board].id, { wrapped: true }),
          em.getReference(User, user.id, { wrapped: true }),
          membership.specialty,
        ),
      );
    }
  }
  const presenter = users.get('presenter@emberline.test');
  if (!presenter) throw new Error('the demo presenter is missing from demoUsers');
  const southPresenter = new User('south.presenter@emberline.test', 'Dr Lena Sorensen');
  southPresenter.roles = ['presenting-physician'];
  southPresenter.passwordHash = passwordHash;
  em.persist(southPresenter);
  em.persist(
    new BoardMembership(
      em.getReference(Board, boards.south.id, { wrapped: true }),
      em.getReference(User, southPresenter.id, { wrapped: true }),
      'hepatology',
    ),
  );
  for (const demo of demoCases) {
    const owner = demo.board === 'north' ? presenter : southPresenter;
    const created = new ClinicalCase({
      caseCode: demo.caseCode,
      board: em.getReference(Board, boards[demo.board].id, { wrapped: true }),
      presenter: em.getReference(User, owner.id, { wrapped: true }),
      yearOfBirth: demo.yearOfBirth,
      sex: demo.sex,
      primaryDiagnosis: demo.primaryDiagnosis,
    });
    created.status = demo.status;
    created.ecogPerformanceStatus = demo.ecog;
    created.hasVascularInvasion = false;
    created.hasExtrahepaticSpread = false;
    em.persist(created);
    const caseRef = em.getReference(ClinicalCase, created.id, { wrapped: true });
    for (const lesion of demo.lesions)
      em.persist(new Lesion(caseRef, lesion.segment, lesion.diameterMm, lesion.kind));
    em.persist(
      new LabPanel(caseRef, em.getReference(User, owner.id, { wrapped: true }), {
        takenAt: new Date(now.getTime() - 3 * 86_400_000),
        bilirubin: { value: demo.labs.bilirubinMgDl, unit: 'mg/dL' },
        albumin: { value: demo.labs.albuminGDl, unit: 'g/dL' },
        inr: demo.labs.inr,
        creatinine: { value: demo.labs.creatinineMgDl, unit: 'mg/dL' },
        sodiumMmolL: demo.labs.sodium,
        plateletsE9L: demo.labs.platelets,
        ascites: demo.labs.ascites,
        encephalopathy: 'none',
        dialysisTwiceInPastWeek: false,
      }),
    );
  }
  await em.flush();
  return true;
}
