import type { Sequelize } from 'sequelize';
import type { Config } from '../../config';

/** What every seeder gets. */
export interface SeedDeps {
  sequelize: Sequelize;
  config: Config;
  log: (m: string) => void;
}
