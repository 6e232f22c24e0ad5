import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('users', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    github_id: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    login: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    display_name: { type: DataTypes.STRING(200), allowNull: false },
    email: { type: DataTypes.STRING(320), allowNull: true },
    avatar_url: { type: DataTypes.STRING(500), allowNull: true },
    shop: { type: DataTypes.STRING(200), allowNull: true },
    bio: { type: DataTypes.TEXT, allowNull: true },
    role: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'follower' },
    is_demo: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  });
  await q.sequelize.query(
    `ALTER TABLE users ADD CONSTRAINT users_role_check CHECK (role IN ('follower','builder','moderator','admin'))`,
  );
  await q.addIndex('users', ['role', 'id']);

  // The table connect-pg-simple expects (its documented table.sql).
  await q.sequelize.query(`
    CREATE TABLE "session" (
      "sid" varchar NOT NULL COLLATE "default" PRIMARY KEY,
      "sess" json NOT NULL,
      "expire" timestamp(6) NOT NULL
    )`);
  await q.sequelize.query(`CREATE INDEX "IDX_session_expire" ON "session" ("expire")`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('session');
  await q.dropTable('users');
}
