/**
 * A story body as safe HTML, the same on the server and in the browser.
 *
 * markdown-it parses (raw HTML off, so a `<script>` in a body is shown as text), our rules decide
 * what each link and image may become, and DOMPurify then checks the result against a short
 * allowlist of tags and attributes, so that a mistake in our rules still cannot let script through.
 */
import DOMPurify from 'isomorphic-dompurify';
import type { Env, MarkdownIt, Token } from 'markdown-it';
import { cautionTexts, GENERAL_CAUTION, isCautionKind } from './cautions';
import {
  checkClaim,
  claimTargetKey,
  createStoryMarkdown,
  parseStory,
  type BrokenClaim,
  type ClaimRef,
  type ClaimStatus,
  type ClaimTarget,
  type ClaimTokenMeta,
} from './claims';

/** A claim of a rendered story, with how it stands against its target (null when there is none). */
export interface RenderedClaim extends ClaimRef {
  status: ClaimStatus;
  target: ClaimTarget | null;
}

/** Where our own story images are served; the only image source a body may use. */
export const STORY_IMAGE_PATH = /^\/api\/story-images\/[1-9]\d{0,15}$/;

const EXTERNAL_LINK_REL = 'nofollow noopener noreferrer';

type LinkRendering =
  | { as: 'claim'; claim: RenderedClaim }
  | { as: 'broken'; target: string }
  | { as: 'external'; href: string }
  | { as: 'internal'; href: string }
  | { as: 'text' };

interface RenderEnv extends Env {
  claims: RenderedClaim[];
  broken: BrokenClaim[];
}

function isExternal(href: string): boolean {
  if (!/^https?:\/\//i.test(href)) return false;
  try {
    const url = new URL(href);
    return url.protocol === 'http:' || url.protocol === 'https:';
  } catch {
    return false;
  }
}

/** A path on this site: "/builds/3", "#notes"; never "//elsewhere" or "/\elsewhere", which browsers take for another host. */
function isSameSite(href: string): boolean {
  return /^\/(?![/\\])/.test(href) || /^#/.test(href);
}

function linkRendering(token: Token, env: RenderEnv): LinkRendering {
  const meta = (token.meta ?? {}) as ClaimTokenMeta;
  if (meta.claimIndex !== undefined) {
    const claim = env.claims[meta.claimIndex];
    if (claim) return { as: 'claim', claim };
  }
  if (meta.brokenIndex !== undefined) return { as: 'broken', target: env.broken[meta.brokenIndex]?.target ?? '' };
  const href = String(token.attrGet('href') ?? '');
  if (isExternal(href)) return { as: 'external', href };
  if (isSameSite(href)) return { as: 'internal', href };
  return { as: 'text' };
}

/** Claim keys are letters, digits, - and _ (readingKeySchema), so the anchor needs no escaping. */
function claimAnchor(claim: ClaimRef): string {
  return `#claim-${claim.kind}-${claim.key}`;
}

function configure(md: MarkdownIt): MarkdownIt {
  const escape = md.utils.escapeHtml;
  const rules = md.renderer.rules;
  const titleAttr = (token: Token) => {
    const title = token.attrGet('title');
    return title ? ` title="${escape(String(title))}"` : '';
  };

  rules.link_open = (tokens, idx, _options, env) => {
    const token = tokens[idx];
    if (!token) return '';
    const rendering = linkRendering(token, env as RenderEnv);
    // The matching close tag is found by nesting, so remember what this one opened.
    token.meta = { ...(token.meta ?? {}), rendering };
    switch (rendering.as) {
      case 'claim': {
        const { claim } = rendering;
        return `<a class="claim" data-claim="${escape(claimTargetKey(claim.kind, claim.key))}" data-claim-state="${claim.status.state}" href="${claimAnchor(claim)}">`;
      }
      case 'broken':
        return `<span class="claim-broken" data-claim-broken="${escape(rendering.target)}">`;
      case 'external':
        return `<a href="${escape(rendering.href)}" rel="${EXTERNAL_LINK_REL}"${titleAttr(token)}>`;
      case 'internal':
        return `<a href="${escape(rendering.href)}"${titleAttr(token)}>`;
      case 'text':
        return '';
    }
  };
  rules.link_close = (tokens, idx) => {
    let depth = 0;
    for (let i = idx - 1; i >= 0; i -= 1) {
      const token = tokens[i];
      if (!token) continue;
      if (token.type === 'link_close') depth += 1;
      else if (token.type === 'link_open') {
        if (depth > 0) {
          depth -= 1;
          continue;
        }
        const rendering = (token.meta as { rendering?: LinkRendering } | null)?.rendering;
        if (!rendering || rendering.as === 'text') return '';
        return rendering.as === 'broken' ? '</span>' : '</a>';
      }
    }
    return '';
  };
  rules.claim_broken = (tokens, idx) => {
    const token = tokens[idx];
    if (!token) return '';
    const target = String((token.meta as { target?: string } | null)?.target ?? '');
    return `<span class="claim-broken" data-claim-broken="${escape(target)}">${escape(token.content)}</span>`;
  };
  rules.image = (tokens, idx, options, env, self) => {
    const token = tokens[idx];
    if (!token) return '';
    const src = String(token.attrGet('src') ?? '');
    const alt = self.renderInlineAsText(token.children ?? [], options, env);
    if (STORY_IMAGE_PATH.test(src)) return `<img src="${escape(src)}" alt="${escape(alt)}"${titleAttr(token)}>`;
    // Images from elsewhere are not fetched by readers' browsers: they become a plain link.
    if (isExternal(src)) return `<a href="${escape(src)}" rel="${EXTERNAL_LINK_REL}">${escape(alt || src)}</a>`;
    if (isSameSite(src)) return `<a href="${escape(src)}">${escape(alt || src)}</a>`;
    return escape(alt);
  };
  rules.container_caution_open = (tokens, idx) => {
    const kind = (tokens[idx]?.info ?? '').trim().split(/\s+/)[1] ?? '';
    const known = isCautionKind(kind);
    const { title, text } = known ? cautionTexts[kind] : GENERAL_CAUTION;
    return `<aside class="caution" data-caution="${known ? kind : 'general'}" role="note"><p class="caution-title">${escape(title)}</p><p class="caution-text">${escape(text)}</p>\n`;
  };
  rules.container_caution_close = () => '</aside>\n';
  return md;
}

let renderer: MarkdownIt | null = null;
function storyRenderer(): MarkdownIt {
  renderer ??= configure(createStoryMarkdown());
  return renderer;
}

const SANITIZE_CONFIG = {
  ALLOWED_TAGS: [
    'p',
    'br',
    'hr',
    'h1',
    'h2',
    'h3',
    'h4',
    'h5',
    'h6',
    'strong',
    'em',
    's',
    'code',
    'pre',
    'blockquote',
    'ul',
    'ol',
    'li',
    'a',
    'img',
    'table',
    'thead',
    'tbody',
    'tr',
    'th',
    'td',
    'aside',
    'span',
  ],
  ALLOWED_ATTR: ['href', 'src', 'alt', 'title', 'class', 'role', 'rel', 'start', 'data-claim', 'data-claim-state', 'data-claim-broken', 'data-caution'],
  // DOMPurify checks every attribute not marked URI-safe against the URI pattern; these carry words, not addresses.
  ADD_URI_SAFE_ATTR: ['rel', 'start', 'data-claim', 'data-claim-state', 'data-claim-broken', 'data-caution'],
  ALLOWED_URI_REGEXP: /^(?:https?:\/\/|\/(?![/\\])|#)/i,
  ALLOW_DATA_ATTR: false,
  ALLOW_ARIA_ATTR: false,
  ALLOW_UNKNOWN_PROTOCOLS: false,
};

/**
 * The last gate of `renderStory`: DOMPurify with our allowlist (no style, no event handlers, no
 * SVG or MathML, no forms or frames; links only to http(s), this site's paths and anchors).
 */
export function sanitizeStoryHtml(html: string): string {
  return DOMPurify.sanitize(html, SANITIZE_CONFIG);
}

/**
 * Renders a body to sanitized HTML. Claims become links checked against `targets` (the build's
 * readings and clearances, see `claimTargetsFrom`); without targets every claim is unknown-target.
 * Broken claims become marked spans; cautions become `<aside class="caution">` blocks.
 */
export function renderStory(
  markdown: string,
  opts?: { targets?: ReadonlyMap<string, ClaimTarget> },
): { html: string; claims: RenderedClaim[]; broken: BrokenClaim[] } {
  const md = storyRenderer();
  const targets = opts?.targets ?? new Map<string, ClaimTarget>();
  const { tokens, claims, broken } = parseStory(markdown, md);
  const rendered: RenderedClaim[] = claims.map((claim) => ({
    ...claim,
    status: checkClaim(claim, targets),
    target: targets.get(claimTargetKey(claim.kind, claim.key)) ?? null,
  }));
  const env: RenderEnv = { claims: rendered, broken };
  const html = sanitizeStoryHtml(md.renderer.render(tokens, md.options, env));
  return { html, claims: rendered, broken };
}
