import { openDatabase } from '../db';
import { seedDemo } from '../../seeders/demo-seed';
import { seedDemoImaging } from '../../seeders/demo-imaging';

/**
 * Seeds the invented demo hospital into an empty database, then the invented CT and its
 * structures into the demo case that has none; each step is a no-op once done.
 */
const orm = await openDatabase();
try {
  const isSeeded = await seedDemo(orm.em.fork());
  process.stderr.write(isSeeded ? 'demo data seeded\n' : 'demo data present already\n');
  const isImagingSeeded = await seedDemoImaging(orm.em.fork());
  process.stderr.write(
    isImagingSeeded ? 'demo CT and structures seeded\n' : 'demo CT present already\n',
  );
} finally {
  await orm.close();
}
