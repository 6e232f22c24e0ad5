import type { QueryInterface } from 'sequelize';

/**
 * Each account's default units: the unit system new figures start in (calculator readings and
 * results, a new instrument, a reader's figures until they pick on the page) and the temperature
 * scale, chosen apart because builders mix them (inches and °C is common). NULL = not chosen.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`ALTER TABLE users
    ADD COLUMN unit_system VARCHAR(8) NULL CONSTRAINT users_unit_system_check CHECK (unit_system IN ('imperial', 'metric')),
    ADD COLUMN temperature_scale VARCHAR(4) NULL CONSTRAINT users_temperature_scale_check CHECK (temperature_scale IN ('degC', 'degF'))`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`ALTER TABLE users
    DROP CONSTRAINT IF EXISTS users_temperature_scale_check,
    DROP CONSTRAINT IF EXISTS users_unit_system_check,
    DROP COLUMN IF EXISTS temperature_scale,
    DROP COLUMN IF EXISTS unit_system`);
}
