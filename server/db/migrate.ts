import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface, Sequelize } from 'sequelize';

const here = path.dirname(fileURLToPath(import.meta.url));

/** A migration module: timestamped file in server/db/migrations exporting up and down. */
export interface Migration {
  up(ctx: { context: QueryInterface }): Promise<void>;
  down(ctx: { context: QueryInterface }): Promise<void>;
}

/** The migrator for this database; its history lives in the table "schema_migrations". */
export function createMigrator(sequelize: Sequelize) {
  return new Umzug({
    migrations: {
      glob: ['migrations/*.ts', { cwd: here }],
      resolve: ({ name, path: file, context }) => ({
        name,
        up: async () => ((await import(file!)) as Migration).up({ context }),
        down: async () => ((await import(file!)) as Migration).down({ context }),
      }),
    },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/** Runs every pending migration; returns the names it ran. */
export async function migrateUp(sequelize: Sequelize): Promise<string[]> {
  const done = await createMigrator(sequelize).up();
  return done.map((m) => m.name);
}
