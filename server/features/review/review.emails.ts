import { STANDING_NOTE } from '@shared/stories/cautions';
import type { OutgoingMail } from '../../mail/mail.job';

/** Who a message goes to. */
export interface Person {
  id: number;
  displayName: string;
  email: string | null;
}

interface StoryRef {
  id: number;
  title: string;
  buildTitle: string;
  builderName: string;
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** Both parts from one list of paragraphs and one call to action, so they never say different things. */
function compose(opts: { to: Person; subject: string; kind: string; paragraphs: string[]; link: { url: string; label: string }; footer?: string[]; headers?: Record<string, string> }): OutgoingMail | null {
  if (!opts.to.email) return null;
  const footer = opts.footer ?? [];
  const text = [
    `Hello ${opts.to.displayName},`,
    '',
    ...opts.paragraphs.flatMap((p) => [p, '']),
    `${opts.link.label}: ${opts.link.url}`,
    '',
    ...footer.flatMap((p) => [p, '']),
    '— Benchproof',
  ].join('\n');
  const html = [
    '<!doctype html><html><body style="font-family: sans-serif; color: #222; line-height: 1.5; max-width: 36rem">',
    `<p>Hello ${escapeHtml(opts.to.displayName)},</p>`,
    ...opts.paragraphs.map((p) => `<p>${escapeHtml(p)}</p>`),
    `<p><a href="${escapeHtml(opts.link.url)}">${escapeHtml(opts.link.label)}</a></p>`,
    ...footer.map((p) => `<p style="font-size: 0.85em; color: #555">${escapeHtml(p)}</p>`),
    '<p>— Benchproof</p></body></html>',
  ].join('\n');
  return { to: opts.to.email, subject: opts.subject, text, html, kind: opts.kind, ...(opts.headers && { headers: opts.headers }) };
}

const present = (m: OutgoingMail | null): m is OutgoingMail => m !== null;

/** To every moderator: a story is waiting. */
export function submittedMails(publicUrl: string, story: StoryRef, moderators: Person[]): OutgoingMail[] {
  return moderators
    .map((to) =>
      compose({
        to,
        kind: 'story-submitted',
        subject: `Waiting for review: ${story.title}`,
        paragraphs: [`${story.builderName} sent "${story.title}" (${story.buildTitle}) for review. Its readings need checking against the footage before it can be published.`],
        link: { url: `${publicUrl}/review/stories/${story.id}`, label: 'Open it in the review queue' },
      }),
    )
    .filter(present);
}

/** Someone's words as a sentence: one full stop at the end, whether they typed it or not. */
export function sentence(words: string): string {
  const text = words.trim();
  return /[.!?…]["”’)]?$/.test(text) ? text : `${text}.`;
}

/** To the builder: a moderator asked for changes, with the reason and the flags to answer. */
export function changesRequestedMail(publicUrl: string, story: StoryRef, builder: Person, reason: string, flags: string[]): OutgoingMail[] {
  return [
    compose({
      to: builder,
      kind: 'changes-requested',
      subject: `Changes requested: ${story.title}`,
      paragraphs: [
        `A moderator looked at "${story.title}" and asked for changes before it can be published.`,
        `Reason: ${sentence(reason)}`,
        ...(flags.length ? [`Flagged: ${flags.map((f) => f.trim().replace(/[.;\s]+$/, '')).join('; ')}.`, 'Answer each flag in the editor, then send the story for review again.'] : []),
      ],
      link: { url: `${publicUrl}/stories/${story.id}/edit`, label: 'Open the story' },
    }),
  ].filter(present);
}

/** To the builder: it is public. */
export function publishedMail(publicUrl: string, story: StoryRef, builder: Person, revision: number): OutgoingMail[] {
  return [
    compose({
      to: builder,
      kind: 'story-published',
      subject: `Published: ${story.title}`,
      paragraphs: [`"${story.title}" passed review and is public${revision > 1 ? ` (revision ${revision})` : ''}. Your followers are being told.`],
      link: { url: `${publicUrl}/stories/${story.id}`, label: 'See the published story' },
    }),
  ].filter(present);
}

/** To the builder: it was withdrawn, by whom and why. */
export function withdrawnMail(publicUrl: string, story: StoryRef, builder: Person, reason: string, byModerator: boolean): OutgoingMail[] {
  return [
    compose({
      to: builder,
      kind: 'story-withdrawn',
      subject: `Withdrawn: ${story.title}`,
      paragraphs: [`"${story.title}" is no longer public: it was withdrawn ${byModerator ? 'by a moderator' : 'by you'}.`, `Reason: ${sentence(reason)}`],
      link: { url: `${publicUrl}/stories/${story.id}/edit`, label: 'Open the story' },
    }),
  ].filter(present);
}

/**
 * To each follower: a builder they follow published (or published a revised version of) a story.
 * Carries a signed one-click unsubscribe link in the body and in the List-Unsubscribe and
 * List-Unsubscribe-Post headers (RFC 8058), so a mail client can offer its own button.
 */
export function followerMails(
  publicUrl: string,
  story: StoryRef & { summary: string; revision: number },
  followers: (Person & { unsubscribeToken: string })[],
): OutgoingMail[] {
  const revised = story.revision > 1;
  return followers
    .map((to) => {
      const oneClick = `${publicUrl}/api/unsubscribe?token=${encodeURIComponent(to.unsubscribeToken)}`;
      const page = `${publicUrl}/unsubscribe?token=${encodeURIComponent(to.unsubscribeToken)}`;
      return compose({
        to,
        kind: 'follower-story-published',
        subject: `${story.builderName} ${revised ? 'revised' : 'published'}: ${story.title}`,
        paragraphs: [
          revised
            ? `${story.builderName} published a revised version of a diary entry of ${story.buildTitle}: "${story.title}" (revision ${story.revision}).`
            : `${story.builderName} published a new diary entry of ${story.buildTitle}: "${story.title}".`,
          ...(story.summary ? [story.summary] : []),
          'Every claim in it links to the reading, the moment in the clip and the computation, checked by a moderator against the footage.',
        ],
        link: { url: `${publicUrl}/stories/${story.id}`, label: 'Read it' },
        footer: [STANDING_NOTE, `You get this because you follow ${story.builderName}. Stop these messages with one click: ${page}`],
        headers: { 'List-Unsubscribe': `<${oneClick}>`, 'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click' },
      });
    })
    .filter(present);
}
