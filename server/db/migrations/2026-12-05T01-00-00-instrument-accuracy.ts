import type { QueryInterface } from 'sequelize';

/**
 * What an instrument brings to every reading taken with it, kept in the register: a calibration
 * certificate's expanded uncertainty with its coverage factor (a normal component, U/k), the
 * maker's maximum permissible error (a rectangular one, MPE/√3), and the setting standard's
 * expanded uncertainty with its k. All in the instrument's unit; all optional. The engine treats
 * each as one input shared by the instrument's readings (correlation 1), so it cancels in a
 * difference of two readings taken with it.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql(`ALTER TABLE instruments
    ADD COLUMN calibration_uncertainty NUMERIC NULL CHECK (calibration_uncertainty >= 0),
    ADD COLUMN calibration_coverage_factor NUMERIC NULL CHECK (calibration_coverage_factor BETWEEN 1 AND 10),
    ADD COLUMN max_permissible_error NUMERIC NULL CHECK (max_permissible_error >= 0),
    ADD COLUMN setting_standard_uncertainty NUMERIC NULL CHECK (setting_standard_uncertainty >= 0),
    ADD COLUMN setting_standard_coverage_factor NUMERIC NULL CHECK (setting_standard_coverage_factor BETWEEN 1 AND 10),
    ADD CONSTRAINT instruments_calibration_pair CHECK ((calibration_uncertainty IS NULL) = (calibration_coverage_factor IS NULL)),
    ADD CONSTRAINT instruments_setting_standard_pair CHECK ((setting_standard_uncertainty IS NULL) = (setting_standard_coverage_factor IS NULL))`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql(`ALTER TABLE instruments
    DROP CONSTRAINT IF EXISTS instruments_setting_standard_pair,
    DROP CONSTRAINT IF EXISTS instruments_calibration_pair,
    DROP COLUMN IF EXISTS setting_standard_coverage_factor,
    DROP COLUMN IF EXISTS setting_standard_uncertainty,
    DROP COLUMN IF EXISTS max_permissible_error,
    DROP COLUMN IF EXISTS calibration_coverage_factor,
    DROP COLUMN IF EXISTS calibration_uncertainty`);
}
