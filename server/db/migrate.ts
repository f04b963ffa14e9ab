/** Schema changes only through migrations (umzug), recorded in the table `schema_migrations`. */
import { Umzug, SequelizeStorage } from 'umzug';
import type { Sequelize, QueryInterface } from 'sequelize';
import { migrations } from './migrations/index';

export type MigrationContext = { queryInterface: QueryInterface; sequelize: Sequelize };

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

export async function migrate(sequelize: Sequelize) {
  return migrator(sequelize).up();
}
