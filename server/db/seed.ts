import type { Sequelize } from 'sequelize';
import { Build, Part } from '../features/builds/build.model';
import { User } from '../features/users/user.model';
import { loadDemoBuilds, loadDemoPeople } from './demo-content';
import { seedLibrary, type LibrarySeedReport } from './seed-library';

/** What a seed run did, so start-up can say it and tests can check it. */
export interface SeedReport {
  created: string[];
  kept: string[];
  /** The demo instruments and starter specs, reported apart from people and builds. */
  library?: LibrarySeedReport;
}

/**
 * Loads the invented demo scenario. Idempotent: rows that exist are left exactly as they are
 * (a role an admin changed stays changed); only missing rows are made.
 */
export async function seedDemo(sequelize: Sequelize): Promise<SeedReport> {
  const report: SeedReport = { created: [], kept: [] };
  await sequelize.transaction(async (transaction) => {
    for (const p of loadDemoPeople()) {
      const [, created] = await User.findOrCreate({
        where: { login: p.login },
        defaults: {
          githubId: String(p.githubId),
          login: p.login,
          displayName: p.name,
          email: p.email,
          avatarUrl: null,
          shop: p.shop,
          bio: p.bio,
          role: p.role,
          isDemo: true,
        },
        transaction,
      });
      (created ? report.created : report.kept).push(p.login);
    }
    report.library = await seedLibrary(transaction);
    for (const b of loadDemoBuilds()) {
      const owner = await User.findOne({ where: { login: b.owner }, transaction });
      if (!owner) throw new Error(`content/builds.json names an owner who is not in people.json: ${b.owner}`);
      const [build, created] = await Build.findOrCreate({
        where: { ownerId: owner.id, title: b.title },
        defaults: { ownerId: owner.id, title: b.title, subject: b.subject },
        transaction,
      });
      if (created) {
        await Part.bulkCreate(b.parts.map((p, position) => ({ buildId: build.id, name: p.name, serial: p.serial, position })), { transaction });
        report.created.push(`build: ${b.title}`);
      } else report.kept.push(`build: ${b.title}`);
    }
  });
  return report;
}
