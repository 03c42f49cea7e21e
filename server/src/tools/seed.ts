import { openDatabase } from '../db';
import { seedDemo } from '../../seeders/demo-seed';
import { seedDemoImaging } from '../../seeders/demo-imaging';
import { seedDemoPlans, seedDemoProfiles } from '../../seeders/demo-plans';

/**
 * Seeds the invented demo hospital into an empty database, its applicator and safety profiles,
 * then the invented CT and its structures into the demo case that has none, and the demo
 * needle plans on it; each step is a no-op once done.
 */
const orm = await openDatabase();
try {
  const isSeeded = await seedDemo(orm.em.fork());
  process.stderr.write(isSeeded ? 'demo data seeded\n' : 'demo data present already\n');
  const areProfilesSeeded = await seedDemoProfiles(orm.em.fork());
  process.stderr.write(
    areProfilesSeeded ? 'demo profiles seeded\n' : 'demo profiles present already\n',
  );
  const isImagingSeeded = await seedDemoImaging(orm.em.fork());
  process.stderr.write(
    isImagingSeeded ? 'demo CT and structures seeded\n' : 'demo CT present already\n',
  );
  const arePlansSeeded = await seedDemoPlans(orm.em.fork());
  process.stderr.write(
    arePlansSeeded ? 'demo needle plans seeded\n' : 'demo needle plans present already\n',
  );
} finally {
  await orm.close();
}
