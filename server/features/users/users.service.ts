import { Op, Transaction } from 'sequelize';
import type { ListUsersQuery, ListUsersResponse, Role } from '@shared/users/user.schema';
import { conflict, notFound } from '../../http/errors';
import { User } from './user.model';

/** What a sign-in provider tells us about a person. */
export interface ProviderProfile {
  githubId: string;
  login: string;
  displayName: string;
  email: string | null;
  avatarUrl: string | null;
}

/**
 * Finds the account for a provider identity or makes one. New accounts are followers;
 * an existing account keeps its role and shop, and takes the provider's current name and e-mail.
 */
export async function upsertFromProvider(profile: ProviderProfile, opts: { demoAccounts: boolean }): Promise<User> {
  const sequelize = User.sequelize!;
  return sequelize.transaction(async (transaction) => {
    const existing = await User.findOne({ where: { githubId: profile.githubId }, transaction });
    await releaseLogin(profile, transaction);
    return upsertIn(existing, profile, opts, transaction);
  });
}

/**
 * Accounts are keyed by GitHub id; a login is only what GitHub calls that id today. When another
 * account still holds the login this person now has (its owner renamed and has not signed in
 * since, and GitHub gave the name to this person), that account's login becomes `gh-<id>--moved`
 * until its owner signs in again. GitHub logins never hold "--", so the placeholder cannot be
 * anyone's real login.
 */
async function releaseLogin(profile: ProviderProfile, transaction: Transaction): Promise<void> {
  const holder = await User.findOne({ where: { login: profile.login, githubId: { [Op.ne]: profile.githubId } }, transaction, lock: transaction.LOCK.UPDATE });
  if (holder) await holder.update({ login: `gh-${holder.githubId}--moved` }, { transaction });
}

async function upsertIn(existing: User | null, profile: ProviderProfile, opts: { demoAccounts: boolean }, transaction: Transaction): Promise<User> {
  if (existing?.isDemo && !opts.demoAccounts) {
    // Demo ids are invented; with the real GitHub one may belong to a real person. Never hand
    // them a demo account (some demo accounts are admins).
    throw new Error(`GitHub account ${profile.githubId} has the id of an invented demo account; refusing to sign it in`);
  }
  if (existing) {
    existing.set({
      login: profile.login,
      displayName: profile.displayName || existing.displayName,
      email: profile.email ?? existing.email,
      avatarUrl: profile.avatarUrl ?? existing.avatarUrl,
    });
    if (existing.changed()) await existing.save({ transaction });
    return existing;
  }
  return User.create(
    {
      githubId: profile.githubId,
      login: profile.login,
      displayName: profile.displayName || profile.login,
      email: profile.email,
      avatarUrl: profile.avatarUrl,
      role: 'follower',
    },
    { transaction },
  );
}

/** One page of users, oldest first, by keyset on id. */
export async function listUsers(q: ListUsersQuery): Promise<ListUsersResponse> {
  const rows = await User.findAll({
    where: {
      ...(q.after ? { id: { [Op.gt]: q.after } } : {}),
      ...(q.role ? { role: q.role } : {}),
    },
    order: [['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  return {
    items: page.map((u) => u.toDto()),
    nextAfter: rows.length > q.limit ? page[page.length - 1]!.id : null,
  };
}

/**
 * Changes a user's role. Refuses to demote the last admin; the admin rows are locked so two
 * admins demoting each other at once cannot leave the site without one.
 */
export async function changeRole(userId: number, role: Role): Promise<User> {
  const sequelize = User.sequelize!;
  return sequelize.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.READ_COMMITTED }, async (t) => {
    // Admin rows first, always in id order, then the target: two admins demoting each other
    // at once queue up instead of deadlocking.
    const admins = await User.findAll({ where: { role: 'admin' }, order: [['id', 'ASC']], transaction: t, lock: t.LOCK.UPDATE });
    const user = await User.findByPk(userId, { transaction: t, lock: t.LOCK.UPDATE });
    if (!user) throw notFound('There is no user with that id.');
    if (user.role === role) return user;
    if (user.role === 'admin') {
      if (admins.length <= 1) {
        throw conflict('This is the last admin. Make another user an admin first.', 'last_admin');
      }
    }
    user.role = role;
    await user.save({ transaction: t });
    return user;
  });
}
