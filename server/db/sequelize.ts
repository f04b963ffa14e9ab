import { Sequelize } from 'sequelize';

/** One Sequelize instance per process, bound to a PostgreSQL URL. */
export function createSequelize(url: string): Sequelize {
  return new Sequelize(url, {
    dialect: 'postgres',
    logging: false,
    pool: { max: 10, min: 0, idle: 10_000 },
    // No JIT compilation in the app's sessions: it adds 50–100 ms of compile time to any statement whose
    // estimated cost passes jit_above_cost (the library's facet scan does past a few hundred thousand rows),
    // far more than it saves on the short queries a web request runs (measured with EXPLAIN ANALYZE, PostgreSQL 15)
    dialectOptions: { options: '-c jit=off' },
    define: { underscored: true },
  });
}
