import { Op } from 'sequelize';
import type { Question as QuestionDto, QuestionList } from '@shared/public/questions.schema';
import { forbidden, notFound } from '../../http/errors';
import { audit } from '../audit/audit.service';
import { Build } from '../builds/build.model';
import { currentPublicationOf } from '../public/public.service';
import { Story } from '../stories/story.model';
import { User } from '../users/user.model';
import { Question } from './question.model';

const reviewers = new Set(['moderator', 'admin']);

/** A story whose questions may be read and asked: one shown to the public now. */
async function publicStory(storyId: number): Promise<{ story: Story; build: Build }> {
  if ((await currentPublicationOf(storyId)) === null) throw notFound('There is no published story with that id.');
  const story = (await Story.findByPk(storyId))!;
  return { story, build: (await Build.findByPk(story.buildId))! };
}

/** Moderators, admins and the story's builder see hidden questions (marked) and why they were hidden. */
function seesHidden(user: User | undefined, build: Build): boolean {
  return Boolean(user && (reviewers.has(user.role) || user.id === build.ownerId));
}

async function toDtos(rows: Question[], privileged: boolean): Promise<QuestionDto[]> {
  const ids = [...new Set(rows.flatMap((q) => [q.authorId, q.answeredBy].filter((id): id is number => id !== null)))];
  const people = new Map((ids.length ? await User.findAll({ where: { id: ids } }) : []).map((u) => [u.id, u]));
  return rows.map((q) => {
    const author = people.get(q.authorId);
    const answerer = q.answeredBy === null ? undefined : people.get(q.answeredBy);
    return {
      id: q.id,
      storyId: q.storyId,
      body: q.body,
      author: { id: q.authorId, login: author?.login ?? '', displayName: author?.displayName ?? '' },
      createdAt: q.createdAt.toISOString(),
      hidden: q.hiddenAt !== null,
      hiddenReason: privileged ? (q.hiddenReason ?? null) : null,
      answer:
        q.answerBody !== null && q.answeredAt !== null
          ? { body: q.answerBody, at: q.answeredAt.toISOString(), by: { id: q.answeredBy!, displayName: answerer?.displayName ?? '' } }
          : null,
    };
  });
}

/** Questions on a published story, oldest first, by keyset on id. */
export async function listQuestions(storyId: number, viewer: User | undefined, q: { after?: number; limit: number }): Promise<QuestionList> {
  const { build } = await publicStory(storyId);
  const privileged = seesHidden(viewer, build);
  const rows = await Question.findAll({
    where: { storyId, ...(q.after !== undefined && { id: { [Op.gt]: q.after } }), ...(!privileged && { hiddenAt: null }) },
    order: [['id', 'ASC']],
    limit: q.limit + 1,
  });
  const page = rows.slice(0, q.limit);
  const last = page[page.length - 1];
  return {
    items: await toDtos(page, privileged),
    nextAfter: rows.length > q.limit && last ? last.id : null,
    canAnswer: Boolean(viewer && viewer.id === build.ownerId),
    canModerate: Boolean(viewer && reviewers.has(viewer.role)),
    canAsk: Boolean(viewer),
  };
}

/** Asks a question on a published story; the text is kept exactly as typed (trimmed). */
export async function askQuestion(storyId: number, user: User, body: string): Promise<QuestionDto> {
  const { build } = await publicStory(storyId);
  const row = await Question.create({ storyId, authorId: user.id, body });
  return (await toDtos([row], seesHidden(user, build)))[0]!;
}

async function questionWithStory(questionId: number) {
  const question = await Question.findByPk(questionId);
  if (!question) throw notFound('There is no question with that id.');
  const story = (await Story.findByPk(question.storyId))!;
  return { question, story, build: (await Build.findByPk(story.buildId))! };
}

/** The story's builder answers (again, to correct it: the answer is replaced). */
export async function answerQuestion(questionId: number, user: User, body: string): Promise<QuestionDto> {
  const { question, story, build } = await questionWithStory(questionId);
  if ((await currentPublicationOf(story.id)) === null) throw notFound('There is no question with that id.');
  if (build.ownerId !== user.id) throw forbidden('Only the builder of this story answers its questions.');
  await question.update({ answerBody: body, answeredBy: user.id, answeredAt: new Date() });
  return (await toDtos([question], true))[0]!;
}

/** A moderator hides (with a reason) or shows again a question; both go in the audit log. */
export async function setHidden(questionId: number, moderator: User, hidden: boolean, reason = ''): Promise<QuestionDto> {
  const { question, story } = await questionWithStory(questionId);
  await Question.sequelize!.transaction(async (transaction) => {
    const before = { hidden: question.hiddenAt !== null, reason: question.hiddenReason };
    await question.update(hidden ? { hiddenAt: new Date(), hiddenBy: moderator.id, hiddenReason: reason } : { hiddenAt: null, hiddenBy: null, hiddenReason: null }, { transaction });
    await audit(
      {
        actorId: moderator.id,
        action: hidden ? 'question.hide' : 'question.unhide',
        subjectType: 'question',
        subjectId: question.id,
        storyId: story.id,
        before,
        after: { hidden, reason: hidden ? reason : null },
        note: reason,
      },
      transaction,
    );
  });
  return (await toDtos([question], true))[0]!;
}
