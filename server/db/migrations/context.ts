import type { QueryInterface, Sequelize } from 'sequelize';

/** What every migration's `up` and `down` get. */
export type MigrationContext = { queryInterface: QueryInterface; sequelize: Sequelize };
