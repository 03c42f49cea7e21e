import { openDatabase } from '../db';
import { seedDemo } from '../../seeders/demo-seed';

/** Seeds the invented demo hospital into an empty database; a no-op afterwards. */
const orm = await openDatabase();
try {
  const isSeeded = await seedDemo(orm.em.fork());
  process.stderr.write(isSeeded ? 'demo data seeded\n' : 'demo data present already\n');
} finally {
  await orm.close();
}
