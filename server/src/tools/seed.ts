import { openDatabase } from '../db';
import { seedDemo } from '../../seeders/demo-seed';
import { seedDemoImaging } from '../../seeders/demo-imaging';
import { seedDemoPlans, seedDemoProfiles } from '../../seeders/demo-plans';
import { queueDemoAssessments } from '../../seeders/demo-assessments';
import { seedDemoMeetings } from '../../seeders/demo-meetings';
import { databaseUrl } from '../database-url';
import {
  AssessmentQueue,
  assessmentQueueSettingsFromEnvironment,
} from '../modules/assessments/assessment-queue';

/**
 * Seeds the invented demo hospital into an empty database, its applicator and safety profiles,
 * then the invented CT and its structures into the demo case that has none, and the demo
 * needle plans on it, the board's meetings (one upcoming, one closed with its minutes), and queues their assessments (worked by the server when it starts); each
 * step is a no-op once done.
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
  const areMeetingsSeeded = await seedDemoMeetings(orm.em.fork());
  process.stderr.write(
    areMeetingsSeeded ? 'demo meetings seeded\n' : 'demo meetings present already\n',
  );
  if (arePlansSeeded) {
    const queue = await AssessmentQueue.start(
      assessmentQueueSettingsFromEnvironment(databaseUrl()),
      (error) => process.stderr.write(`assessment queue: ${error.message}\n`),
    );
    try {
      const count = await queueDemoAssessments(orm.em.fork(), queue);
      process.stderr.write(`${count} demo plan assessments queued\n`);
    } finally {
      await queue.stop();
    }
  }
} finally {
  await orm.close();
}
