import type { BrokenClaim } from '../stories/claims';
import type { RenderedClaim } from '../stories/render';
import type { PublishBlocker } from './review.schema';

/**
 * The claims of a story that cannot stand as written: a link that is not a claim, a claim whose
 * reading or clearance does not exist, a figure or verdict in the text that its evidence
 * contradicts. One line each; the same codes stop sending for review and publishing.
 */
export function claimBlockers(e: { claims: readonly RenderedClaim[]; broken: readonly BrokenClaim[] }): PublishBlocker[] {
  const blockers: PublishBlocker[] = [];
  for (const b of e.broken) {
    blockers.push({ code: 'claim-broken', message: `Line ${b.line}: "${b.text}" — ${b.message}`, subject: { type: 'claim', key: b.target } });
  }
  for (const c of e.claims) {
    if (c.status.state === 'unknown-target') {
      blockers.push({ code: 'claim-unknown', message: `Line ${c.line}: "${c.text}" — ${c.status.message}`, subject: { type: 'claim', key: `${c.kind}:${c.key}` } });
    } else if (c.status.state === 'number-disagrees' || c.status.state === 'verdict-disagrees') {
      blockers.push({ code: 'claim-disagrees', message: `Line ${c.line}: "${c.text}" — ${c.status.message}`, subject: { type: 'claim', key: `${c.kind}:${c.key}` } });
    }
  }
  return blockers;
}
