import { Op, type Transaction } from 'sequelize';
import type { z } from 'zod';
import type { auditEntrySchema } from '@shared/review/review.schema';
import { User } from '../users/user.model';
import { AuditEntry } from './audit.model';

export interface AuditLine {
  actorId: number | null;
  action: string;
  subjectType: string;
  subjectId: number;
  storyId?: number | null;
  before?: Record<string, unknown> | null;
  after?: Record<string, unknown> | null;
  note?: string;
}

/** Appends a line to the audit log, inside the caller's transaction so it commits with the change. */
export async function audit(line: AuditLine, transaction?: Transaction): Promise<void> {
  await AuditEntry.create(
    {
      actorId: line.actorId,
      action: line.action,
      subjectType: line.subjectType,
      subjectId: line.subjectId,
      storyId: line.storyId ?? null,
      before: line.before ?? null,
      after: line.after ?? null,
      note: line.note ?? '',
    },
    { transaction },
  );
}

type AuditDto = z.infer<typeof auditEntrySchema>;

/** The log, newest first, by keyset on id; optionally one story's lines. */
export async function listAudit(q: { storyId?: number; before?: string; limit: number }): Promise<{ items: AuditDto[]; nextBefore: string | null }> {
  const rows = await AuditEntry.findAll({
    where: {
      ...(q.storyId !== undefined && { storyId: q.storyId }),
      ...(q.before !== undefined && { id: { [Op.lt]: q.before } }),
    },
    order: [['id', 'DESC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const actorIds = [...new Set(page.map((r) => r.actorId).filter((id): id is number => id !== null))];
  const names = new Map((actorIds.length ? await User.findAll({ where: { id: actorIds }, attributes: ['id', 'displayName'] }) : []).map((u) => [u.id, u.displayName]));
  return {
    items: page.map((r) => ({
      id: String(r.id),
      at: r.at.toISOString(),
      actorId: r.actorId,
      actorName: r.actorId === null ? null : (names.get(r.actorId) ?? null),
      action: r.action,
      subjectType: r.subjectType,
      subjectId: r.subjectId,
      storyId: r.storyId,
      before: r.before,
      after: r.after,
      note: r.note,
    })),
    nextBefore: rows.length > q.limit ? String(page[page.length - 1]!.id) : null,
  };
}
