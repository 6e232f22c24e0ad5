import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { countWords } from '@shared/stories/story.schema';

/**
 * The earlier count, by regular expressions: kept here as the reference for what counts as a word.
 * It backtracks quadratically over unclosed `[`, `<` or fences, so it only ever sees short texts.
 */
function regexCount(markdown: string): number {
  const text = markdown
    .replace(/```[\s\S]*?```/g, ' ')
    .replace(/!\[([^\]]*)\]\([^)]*\)/g, '$1')
    .replace(/\[([^\]]*)\]\([^)]*\)/g, '$1')
    .replace(/<[^>]+>/g, ' ');
  return (text.match(/[\p{L}\p{N}]+(?:[.'’-][\p{L}\p{N}]+)*/gu) ?? []).length;
}

describe('the word count of a story body', () => {
  it('counts words, link and image texts, and leaves out fences, targets and tags', () => {
    expect(countWords('[end float is three thou](clearance:end-float) now')).toBe(6);
    expect(countWords('![the pump body](/api/story-images/3) and <b>bold</b>')).toBe(5);
    expect(countWords('```\nnot counted\n``` after')).toBe(1);
    expect(countWords("0.0047 in, the rotor's face, half-worn")).toBe(6);
  });

  it('agrees with the regular-expression count on every short text of Markdown marks', () => {
    const mark = fc.constantFrom('[', ']', '(', ')', '<', '>', '!', '`', 'a', 'b', '4', ' ', '-', '.', "'", '\n');
    fc.assert(
      fc.property(fc.array(mark, { maxLength: 40 }).map((chars) => chars.join('')), (text) => countWords(text) === regexCount(text)),
      { numRuns: 5000 },
    );
  });

  // OWASP ASVS 5.0 V1.3 / V15.2: input of hostile shape must not cost more than its length. These
  // bodies took the regular expressions seconds each; here they are counted like any other text
  // (the count itself is the check: no timing here, `countWords` is one pass per construct).
  // Expected counts: no mark closes, so every `a` stands alone as a word and nothing else is one.
  it.each([
    ['[', 0],
    ['<', 0],
    ['![', 0],
    ['```', 0],
    ['[a](', 24_750],
    ['[a]', 33_000],
    ['<a', 49_500],
  ] as const)('counts a 99,000-character body of %j', (unit, expected) => {
    const body = unit.repeat(Math.floor(99_000 / unit.length));
    expect(countWords(body)).toBe(expected);
    // The reference agrees on a short run of the same shape (it cannot be run on the long one).
    expect(countWords(unit.repeat(20))).toBe(regexCount(unit.repeat(20)));
  });
});
