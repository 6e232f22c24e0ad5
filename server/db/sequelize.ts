import { Sequelize } from 'sequelize';
import pg from 'pg';

// NUMERIC and BIGINT come back as strings, which keeps measured values exact.
/** Opens a Sequelize instance on the given PostgreSQL URL (no query runs until used). */
export function createSequelize(databaseUrl: string, opts: { logging?: boolean } = {}) {
  return new Sequelize(databaseUrl, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: opts.logging ? console.log : false,
    pool: { max: 10, min: 0, idle: 10_000 },
    define: { underscored: true },
  });
}
