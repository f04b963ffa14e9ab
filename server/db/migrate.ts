/** Schema changes only through migrations (umzug), recorded in the table `schema_migrations`. */
import { Umzug, SequelizeStorage } from 'umzug';
import type { Sequelize } from 'sequelize';
import { migrations } from './migrations/index';

import type { MigrationContext } from './migrations/context';

export type { MigrationContext } from './migrations/context';

export function migrator(sequelize: Sequelize) {
  return new Umzug<MigrationContext>({
    migrations: migrations.map((m) => ({
      name: m.name,
      up: ({ context }) => m.up(context),
      down: ({ context }) => m.down(context),
    })),
    context: { queryInterface: sequelize.getQueryInterface(), sequelize },
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/** The advisory-lock key migrations hold (any constant no other code uses). */
const MIGRATE_LOCK = 4_815_162_342;

/**
 * Apply pending migrations. Several processes may boot at once (web and worker
 * processes on one database): each waits for a PostgreSQL advisory lock, held
 * by a transaction on its own connection while umzug runs, so one migrates at
 * a time and the others then find nothing left to do.
 */
export async function migrate(sequelize: Sequelize) {
  return sequelize.transaction(async (transaction) => {
    await sequelize.query('SELECT pg_advisory_xact_lock(:k)', { replacements: { k: MIGRATE_LOCK }, transaction });
    return migrator(sequelize).up();
  });
}
