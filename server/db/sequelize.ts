import { Sequelize } from 'sequelize';

/** One Sequelize instance per process, bound to a PostgreSQL URL. */
export function createSequelize(url: string): Sequelize {
  return new Sequelize(url, {
    dialect: 'postgres',
    logging: false,
    pool: { max: 10, min: 0, idle: 10_000 },
    define: { underscored: true },
  });
}
