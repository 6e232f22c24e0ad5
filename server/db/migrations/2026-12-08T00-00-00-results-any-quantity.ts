import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Results of any quantity and any measurement function: a result may be a formula over named
 * readings (`formula`, its `constants`, the unit to state it in) rather than a signed sum, and
 * each of its readings carries the name the formula uses (`clearance_terms.symbol`). Readings,
 * instruments, zero checks and specs already keep their unit as text, so other quantities (cc,
 * lbf_ft, psi, degC…) need no new columns.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.addColumn('clearances', 'formula', { type: DataTypes.TEXT, allowNull: true });
  await q.addColumn('clearances', 'constants', { type: DataTypes.JSONB, allowNull: false, defaultValue: {} });
  await q.addColumn('clearances', 'result_unit', { type: DataTypes.STRING(8), allowNull: true });
  await q.addColumn('clearance_terms', 'symbol', { type: DataTypes.STRING(40), allowNull: true });
  await q.changeColumn('clearances', 'template', { type: DataTypes.STRING(40), allowNull: true });
  // A formula's readings are told apart by their names.
  await q.sequelize.query(
    `CREATE UNIQUE INDEX clearance_terms_symbol_unique ON clearance_terms (clearance_id, symbol) WHERE symbol IS NOT NULL`,
  );
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query('DROP INDEX IF EXISTS clearance_terms_symbol_unique');
  await q.removeColumn('clearance_terms', 'symbol');
  await q.removeColumn('clearances', 'result_unit');
  await q.removeColumn('clearances', 'constants');
  await q.removeColumn('clearances', 'formula');
}
