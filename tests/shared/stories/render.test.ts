import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { cautionKinds, cautionTexts, GENERAL_CAUTION, STANDING_NOTE } from '@shared/stories/cautions';
import { claimTargetKey, type ClaimTarget } from '@shared/stories/claims';
import { renderStory } from '@shared/stories/render';

// jsdom ships no type declarations; only its constructor and window.document are used here.
const { JSDOM } = createRequire(import.meta.url)('jsdom') as { JSDOM: new (html: string) => { window: { document: Document } } };

function parse(html: string): Document {
  return new JSDOM(`<!DOCTYPE html><body>${html}</body>`).window.document;
}

const umFromIn = (inches: number) => inches * 25_400; // NIST SP 811, appendix B: 1 in = 25.4 mm exactly

const endFloat: ClaimTarget = {
  kind: 'clearance',
  key: 'end-float-after',
  name: 'End float after lapping',
  quantity: 'length',
  unit: 'in',
  value: 0.0047,
  expandedUncertainty: 0.0003,
  valueUm: umFromIn(0.0047),
  expandedUncertaintyUm: umFromIn(0.0003),
  display: '0.0047 in ± 0.00030 in (k = 2)',
  verdict: 'conforms',
  momentId: null,
  clipId: null,
  atMs: null,
  frameUrl: null,
};
const targets = new Map([[claimTargetKey('clearance', 'end-float-after'), endFloat]]);

describe('rendering a story body', () => {
  it('turns claims into links carrying the target and how the words stand against it', () => {
    const body = 'Now [end float is 4.7 thou](clearance:end-float-after), not [three thou](clearance:end-float-after), see [the bore](reading:bore-depth).';
    const { html, claims } = renderStory(body, { targets });
    const links = [...parse(html).querySelectorAll('a.claim')];
    expect(links.map((a) => [a.textContent, a.getAttribute('data-claim'), a.getAttribute('data-claim-state'), a.getAttribute('href')])).toEqual([
      ['end float is 4.7 thou', 'clearance:end-float-after', 'ok', '#claim-clearance-end-float-after'],
      ['three thou', 'clearance:end-float-after', 'number-disagrees', '#claim-clearance-end-float-after'],
      ['the bore', 'reading:bore-depth', 'unknown-target', '#claim-reading-bore-depth'],
    ]);
    expect(claims.map((c) => [c.status.state, c.target?.key ?? null])).toEqual([
      ['ok', 'end-float-after'],
      ['number-disagrees', 'end-float-after'],
      ['unknown-target', null],
    ]);
  });

  it('without targets every claim is unknown-target', () => {
    const { claims } = renderStory('[x](clearance:end-float-after)');
    expect(claims[0]?.status.state).toBe('unknown-target');
  });

  it('shows a broken claim as marked text, not a link', () => {
    const { html, broken } = renderStory('[typo](clearence:x) and [spaced](clearance:Bad Key)');
    const doc = parse(html);
    expect(doc.querySelectorAll('a')).toHaveLength(0);
    expect([...doc.querySelectorAll('span.claim-broken')].map((s) => [s.textContent, s.getAttribute('data-claim-broken')])).toEqual([
      ['typo', 'clearence:x'],
      ['spaced', 'clearance:Bad Key'],
    ]);
    expect(broken).toHaveLength(2);
  });

  it('renders a caution block with its kind, title and text, and an unknown kind as a general caution', () => {
    const body = ':::caution machining\nFace the body with the guard down.\n:::\n\n:::caution welding\nGrind the bead.\n:::';
    const asides = [...parse(renderStory(body).html).querySelectorAll('aside.caution')];
    expect(asides.map((a) => [a.getAttribute('data-caution'), a.getAttribute('role'), a.querySelector('.caution-title')?.textContent])).toEqual([
      ['machining', 'note', cautionTexts.machining.title],
      ['general', 'note', GENERAL_CAUTION.title],
    ]);
    expect(asides[0]?.textContent).toContain('Face the body with the guard down.');
    expect(asides[0]?.textContent).toContain(cautionTexts.machining.text);
  });

  it('has a title and a text for every kind of caution, and a standing note naming the manual', () => {
    for (const kind of cautionKinds) {
      expect(cautionTexts[kind].title.length).toBeGreaterThan(3);
      expect(cautionTexts[kind].text.length).toBeGreaterThan(40);
    }
    expect(STANDING_NOTE).toMatch(/builder’s own/);
    expect(STANDING_NOTE).toMatch(/manufacturer’s manual, local rules and qualified practice/);
  });

  it('keeps http(s) and same-site links, marks external ones, and drops others to text', () => {
    const body = '[maker](https://example.com/manual "Manual") [build](/builds/3) [notes](#notes) [relative](pump/notes) [mail](mailto:a@example.com) [proto](//example.com/x)';
    const doc = parse(renderStory(body).html);
    const links = [...doc.querySelectorAll('a')].map((a) => [a.textContent, a.getAttribute('href'), a.getAttribute('rel')]);
    expect(links).toEqual([
      ['maker', 'https://example.com/manual', 'nofollow noopener noreferrer'],
      ['build', '/builds/3', null],
      ['notes', '#notes', null],
    ]);
    expect(doc.body.textContent).toContain('relative');
    expect(doc.body.textContent).toContain('mail');
    expect(doc.body.textContent).toContain('proto');
  });

  it('shows only our own story images; other images become a plain link or their alt text', () => {
    const body = '![pump body](/api/story-images/12) ![elsewhere](https://example.com/a.png) ![inline](data:image/png;base64,iVBORw0KGgo=) ![odd](/api/story-images/12/../../x)';
    const doc = parse(renderStory(body).html);
    expect([...doc.querySelectorAll('img')].map((i) => [i.getAttribute('src'), i.getAttribute('alt')])).toEqual([['/api/story-images/12', 'pump body']]);
    expect([...doc.querySelectorAll('a')].map((a) => [a.textContent, a.getAttribute('href')])).toEqual([
      ['elsewhere', 'https://example.com/a.png'],
      ['odd', '/api/story-images/12/../../x'],
    ]);
    expect(doc.body.textContent).toContain('inline');
  });

  it('shows raw HTML in a body as text', () => {
    const doc = parse(renderStory('A <b>bold</b> claim <img src=x onerror=alert(1)>').html);
    expect(doc.querySelector('b')).toBeNull();
    expect(doc.querySelector('img')).toBeNull();
    expect(doc.body.textContent).toContain('<b>bold</b>');
  });

  it('uses the typographer but reads claim words as typed', () => {
    const { html, claims } = renderStory('"Quoted" -- and [gap 0.003"](clearance:end-float-after)', { targets });
    expect(parse(html).body.textContent).toContain('“Quoted” –');
    expect(claims[0]?.text).toBe('gap 0.003"');
  });
});
