import type { Sequelize } from 'sequelize';
import { User } from '../features/users/user.model';
import { loadDemoPeople } from './demo-content';

/** What a seed run did, so start-up can say it and tests can check it. */
export interface SeedReport {
  created: string[];
  kept: string[];
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
  });
  return report;
}
