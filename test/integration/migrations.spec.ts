import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { MikroORM } from '@mikro-orm/postgresql';
import { openDatabase } from '../../server/src/db';
import { connectionUrl, dropDatabase, ensureDatabase } from '../../server/scripts/postgres.mjs';

/** A database of this file's own, so "from empty" really starts empty. */
const database = `emberline_migrations_${process.pid}`;

const expectedTables = [
  'agenda_item',
  'annotation',
  'app_user',
  'applicator_profile',
  'applicator_profile_version',
  'assessment',
  'attendance',
  'audit_event',
  'board',
  'board_membership',
  'booking_event',
  'checklist_threshold',
  'clinical_case',
  'decision',
  'decision_amendment',
  'http_session',
  'image_series',
  'item_comment',
  'key_image',
  'lab_panel',
  'label_map',
  'lesion',
  'mail_delivery',
  'meeting',
  'minutes',
  'needle_plan',
  'procedure_booking',
  'role_policy',
  'safety_profile',
  'safety_profile_version',
  'saml_assertion_seen',
  'saml_request',
  'sign_in_failure',
  'structure',
  'treatment_record',
  'uid_replacement',
  'vote',
];

async function tables(orm: MikroORM): Promise<string[]> {
  const rows = await orm.em
    .getConnection()
    .execute<{ tablename: string }[]>(
      "select tablename from pg_tables where schemaname = 'public' order by tablename",
    );
  return rows.map((row) => row.tablename).filter((name) => name !== 'mikro_orm_migrations');
}

describe('migrations', () => {
  let orm: MikroORM;
  beforeAll(async () => {
    await dropDatabase(database);
    await ensureDatabase(database);
    orm = await openDatabase(connectionUrl(database));
  });
  afterAll(async () => {
    await orm.close();
    await dropDatabase(database);
  });

  it('build the whole schema from an empty database', async () => {
    const migrator = orm.getMigrator();
    expect(await tables(orm)).toEqual([]);
    await migrator.up();
    expect(await tables(orm)).toEqual(expectedTables);
    expect(await migrator.getPendingMigrations()).toEqual([]);
  });

  it('leave the entities and the committed migrations in agreement (no pending schema diff)', async () => {
    await orm.getMigrator().up();
    const diff = await orm.getSchemaGenerator().getUpdateSchemaSQL({ wrap: false });
    expect(diff.trim()).toBe('');
  });
});
