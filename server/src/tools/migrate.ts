import { openDatabase, migrate } from '../db';

/** Applies pending migrations to the database of DATABASE_URL or the project's own cluster. */
const orm = await openDatabase();
try {
  const applied = await migrate(orm);
  process.stderr.write(
    applied.length ? `migrated: ${applied.join(', ')}\n` : 'schema up to date\n',
  );
} finally {
  await orm.close();
}
