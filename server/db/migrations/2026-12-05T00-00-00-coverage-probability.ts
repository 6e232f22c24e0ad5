import type { QueryInterface } from 'sequelize';

/**
 * A clearance's coverage factor becomes a choice rather than a default. NULL means "a 95 %
 * coverage interval worked out by the engine" (k from Student's t for ν_eff, or a Monte Carlo
 * interval where the inputs are far from normal); a number is a k the builder chose. Rows that
 * carry the old default k = 2 were never a choice, so they become NULL and are judged by the
 * second engine the next time they are read. Publications keep the figures they were judged
 * with: they are stored as judged and are not touched here.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql('ALTER TABLE clearances ALTER COLUMN coverage_factor DROP NOT NULL');
  await sql('ALTER TABLE clearances ALTER COLUMN coverage_factor DROP DEFAULT');
  await sql('UPDATE clearances SET coverage_factor = NULL WHERE coverage_factor = 2');
}

export async function down({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql('UPDATE clearances SET coverage_factor = 2 WHERE coverage_factor IS NULL');
  await sql('ALTER TABLE clearances ALTER COLUMN coverage_factor SET DEFAULT 2');
  await sql('ALTER TABLE clearances ALTER COLUMN coverage_factor SET NOT NULL');
}
