import { MikroORM } from '@mikro-orm/postgresql';
import { ormConfig } from './mikro-orm.config';

export async function openDatabase(clientUrl?: string): Promise<MikroORM> {
  return MikroORM.init(ormConfig(clientUrl));
}

/** Applies pending migrations; returns the names applied. */
export async function migrate(orm: MikroORM): Promise<string[]> {
  const applied = await orm.getMigrator().up();
  return applied.map((migration) => migration.name);
}
