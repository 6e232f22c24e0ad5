import { Op } from 'sequelize';
import type { Follow as FollowDto, Preferences, PreferencesPatch } from '@shared/public/follows.schema';
import { badRequest, notFound } from '../../http/errors';
import { audit } from '../audit/audit.service';
import { ReaderPreferences } from '../public/reader-preferences.model';
import { builderRef } from '../public/publication';
import { isBuilderAccount } from '../public/public.service';
import { User } from '../users/user.model';
import { Follow } from './follow.model';

function toDto(follow: Follow, builder: User): FollowDto {
  return { builder: builderRef(builder), emailOnPublish: follow.emailOnPublish, since: follow.createdAt.toISOString() };
}

async function builderToFollow(follower: User, builderId: number): Promise<User> {
  if (builderId === follower.id) {
    throw badRequest('You cannot follow yourself.', [{ path: 'builderId', message: 'that is your own account' }], 'cannot_follow_self');
  }
  const builder = await User.findByPk(builderId);
  if (!builder || !(await isBuilderAccount(builder))) throw notFound('There is no builder with that id.');
  return builder;
}

/** Follows a builder (mail on publish on); following again changes nothing. `created` says which. */
export async function follow(follower: User, builderId: number): Promise<{ follow: FollowDto; created: boolean }> {
  const builder = await builderToFollow(follower, builderId);
  const [row, created] = await Follow.findOrCreate({ where: { followerId: follower.id, builderId: builder.id }, defaults: { followerId: follower.id, builderId: builder.id } });
  return { follow: toDto(row, builder), created };
}

/** Stops following; harmless when not following. */
export async function unfollow(follower: User, builderId: number): Promise<void> {
  await Follow.destroy({ where: { followerId: follower.id, builderId } });
}

/** The builders an account follows, by keyset on the builder's id. */
export async function myFollows(follower: User, q: { after?: number; limit: number }): Promise<{ items: FollowDto[]; nextAfter: number | null }> {
  const rows = await Follow.findAll({
    where: { followerId: follower.id, ...(q.after !== undefined && { builderId: { [Op.gt]: q.after } }) },
    order: [['builderId', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const builders = new Map((page.length ? await User.findAll({ where: { id: page.map((f) => f.builderId) } }) : []).map((u) => [u.id, u]));
  const last = page[page.length - 1];
  return {
    items: page.filter((f) => builders.has(f.builderId)).map((f) => toDto(f, builders.get(f.builderId)!)),
    nextAfter: rows.length > q.limit && last ? last.builderId : null,
  };
}

/** Turns a follow's mail on or off (404 when not following that builder). */
export async function setEmailOnPublish(follower: User, builderId: number, emailOnPublish: boolean): Promise<FollowDto> {
  return Follow.sequelize!.transaction(async (transaction) => {
    const row = await Follow.findOne({ where: { followerId: follower.id, builderId }, transaction, lock: transaction.LOCK.UPDATE });
    const builder = row ? await User.findByPk(builderId, { transaction }) : null;
    if (!row || !builder) throw notFound('You do not follow that builder.');
    if (row.emailOnPublish !== emailOnPublish) {
      await row.update({ emailOnPublish }, { transaction });
      // Same trail as a one-click unsubscribe, so who turned mail off (or on) is on record.
      await audit(
        { actorId: follower.id, action: emailOnPublish ? 'follow.subscribe' : 'follow.unsubscribe', subjectType: 'user', subjectId: builderId, before: { emailOnPublish: !emailOnPublish }, after: { emailOnPublish } },
        transaction,
      );
    }
    return toDto(row, builder);
  });
}

function preferencesDto(p: ReaderPreferences, user: User): Preferences {
  return {
    units: p.unitsPreference ?? null,
    weeklyDigest: p.weeklyDigest,
    unitSystem: user.unitSystem ?? null,
    temperatureScale: user.temperatureScale ?? null,
  };
}

/** A reader's preferences. */
export async function preferencesOf(user: User): Promise<Preferences> {
  return preferencesDto((await ReaderPreferences.findByPk(user.id))!, user);
}

/** Changes what is sent of a reader's preferences. */
export async function updatePreferences(user: User, patch: PreferencesPatch): Promise<Preferences> {
  return User.sequelize!.transaction(async (transaction) => {
    const row = (await ReaderPreferences.findByPk(user.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
    await row.update(
      {
        ...(patch.units !== undefined && { unitsPreference: patch.units }),
        ...(patch.weeklyDigest !== undefined && { weeklyDigest: patch.weeklyDigest }),
      },
      { transaction },
    );
    // The default units live on the account (GET /api/me answers them). `silent`: users.updated_at
    // keys the builder's cached public pages, which a units default does not change.
    await user.update(
      {
        ...(patch.unitSystem !== undefined && { unitSystem: patch.unitSystem }),
        ...(patch.temperatureScale !== undefined && { temperatureScale: patch.temperatureScale }),
      },
      { transaction, silent: true },
    );
    return preferencesDto(row, user);
  });
}
