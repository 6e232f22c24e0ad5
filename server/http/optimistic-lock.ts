import type { Model, ModelStatic, Transaction } from 'sequelize';
import { AppError } from './errors';

/**
 * The refusal two tabs get when the second saves over the first: 409 `edit_conflict`, naming
 * the version now stored so the client can offer to reload. Nothing is merged silently.
 */
export function editConflict(what: string, current: { lockVersion: number; updatedAt?: Date | null }) {
  const when = current.updatedAt ? ` at ${current.updatedAt.toISOString().slice(0, 16).replace('T', ' ')} UTC` : '';
  return new AppError(
    409,
    'edit_conflict',
    `This ${what} was saved elsewhere (another tab or device) since you opened it${when}. Reload it to see that version, then make your change again.`,
    [{ path: 'lockVersion', message: `the stored version is ${current.lockVersion}` }],
  );
}

/**
 * Writes `changes` only if the row still has `lockVersion`, and bumps it: one conditional
 * UPDATE, so two concurrent saves cannot both win. Throws `editConflict` otherwise. Reload the
 * instance afterwards if you need its new values.
 */
export async function updateWithLock<M extends Model & { lockVersion: number; id: number }>(
  model: ModelStatic<M>,
  instance: M,
  lockVersion: number,
  changes: Record<string, unknown>,
  opts: { what: string; transaction?: Transaction },
): Promise<void> {
  const [count] = await model.update(
    { ...changes, lockVersion: lockVersion + 1 } as never,
    { where: { id: instance.id, lockVersion } as never, transaction: opts.transaction },
  );
  if (count === 1) return;
  await instance.reload({ transaction: opts.transaction });
  throw editConflict(opts.what, instance as unknown as { lockVersion: number; updatedAt?: Date });
}
