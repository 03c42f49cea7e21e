import type { MikroORM } from '@mikro-orm/postgresql';
import { seedDemo, demoPassword } from '../../server/seeders/demo-seed';
import { seedDemoProfiles } from '../../server/seeders/demo-plans';
import { ClinicalCase } from '../../server/src/modules/cases/case.entity';
import { truncateAll } from './test-app';

export { demoPassword };

export interface DemoIds {
  northDraft: string;
  northReady: string;
  northDecided: string;
  southReady: string;
  northBoard: string;
  southBoard: string;
}

/**
 * A fresh copy of the invented demo hospital with its applicator and safety profiles, and the
 * ids the tests need from it.
 */
export async function resetToDemo(orm: MikroORM): Promise<DemoIds> {
  await truncateAll(orm);
  await seedDemo(orm.em.fork());
  await seedDemoProfiles(orm.em.fork());
  const em = orm.em.fork();
  const byCode = async (caseCode: string) => em.findOneOrFail(ClinicalCase, { caseCode });
  const northDraft = await byCode('NLB-2026-019');
  const northReady = await byCode('NLB-2026-014');
  const northDecided = await byCode('NLB-2026-022');
  const southReady = await byCode('SLB-2026-007');
  return {
    northDraft: northDraft.id,
    northReady: northReady.id,
    northDecided: northDecided.id,
    southReady: southReady.id,
    northBoard: northDraft.board.id,
    southBoard: southReady.board.id,
  };
}
