/**
 * Claims: Markdown links in a story whose target names evidence of the build,
 * `[end float is now three thou](clearance:end-float-after)` or `[the bore measured 0.5642 in](reading:bore-depth)`.
 *
 * Links are found with markdown-it's own parser, so a claim inside a code span or a fenced block
 * is not a claim. A target that looks like one of ours but is not (`clearence:x`, `reading:`,
 * `clearance:Bad Key`) is a broken claim. The words of a claim are checked against the figure it
 * links to: the lengths it states and the verdict words it uses.
 */
import markdownIt, { type Env, type MarkdownIt, type StateCore, type StateInline, type Token } from 'markdown-it';
import container from 'markdown-it-container';

import type { Reading as ReadingDto } from '../readings/reading.schema';
import { readingKeySchema } from '../measure/calc.schema';
import { formatNumber, formatUncertainty, symbolFor } from '../measure/format';
import { verdictWords, type Verdict } from '../measure/spec';
import { micrometresToPicometres, picometresPerUnit, type LengthUnit } from '../measure/units';
import { convertExact, quantityOf, unitTable, type AnyUnit, type QuantityKind } from '../measure/quantities';
import { Fraction, fractionOfDecimal, fractionToFixed } from '../measure/exact';
import { parseDecimalText } from '../measure/decimal';
import { formatUncertaintyIn } from '../measure/format-quantity';
import { otherUnitAliases } from '../measure/quantity-text';
import { findStatedLengths, type StatedLength } from './number-words';
import type { Clearance as ClearanceDto } from '../clearances/clearance.schema';
import { resultFigures } from '../clearances/result-figures';

/** The kinds of evidence a claim can link to. */
export const claimKinds = ['reading', 'clearance'] as const;

/** A kind of claim target. */
export type ClaimKind = (typeof claimKinds)[number];

/** A claim found in a body; offsets are into the Markdown source (so the editor can highlight it). */
export interface ClaimRef {
  kind: ClaimKind;
  key: string;
  /** The words of the link, as written (Markdown marks left out). */
  text: string;
  start: number;
  end: number;
  /** 1-based line of `start`. */
  line: number;
}

/** Something that looks like a claim but cannot be one; offsets as for `ClaimRef`. */
export interface BrokenClaim {
  target: string;
  text: string;
  start: number;
  end: number;
  line: number;
  message: string;
}

/** What a claim can be checked against: a reading (expanded U = 2u) or a clearance of the build. */
export interface ClaimTarget {
  kind: ClaimKind;
  key: string;
  name: string;
  /** What the figure measures; its figures are in `unit` (and in µm for a length). */
  quantity: QuantityKind;
  unit: AnyUnit;
  value: number;
  expandedUncertainty: number;
  /** Lengths: the value and U in µm (0 for any other quantity, never read for one). */
  valueUm: number;
  expandedUncertaintyUm: number;
  display: string;
  verdict: Verdict | null;
  momentId: number | null;
  clipId: number | null;
  atMs: number | null;
  frameUrl: string | null;
}

/** How a claim stands against its target. */
export type ClaimStatus =
  | { state: 'ok' }
  | { state: 'unknown-target'; message: string }
  | { state: 'number-disagrees'; message: string; statedUm: number | null }
  | { state: 'verdict-disagrees'; message: string };

/** The map key of a target: `reading:bore-depth`. */
export function claimTargetKey(kind: ClaimKind, key: string): string {
  return `${kind}:${key}`;
}

function isClaimKind(value: string): value is ClaimKind {
  return (claimKinds as readonly string[]).includes(value);
}

function editDistance(a: string, b: string): number {
  let previous = Array.from({ length: b.length + 1 }, (_, i) => i);
  for (let i = 1; i <= a.length; i += 1) {
    const current = [i];
    for (let j = 1; j <= b.length; j += 1) {
      current[j] = Math.min((previous[j] ?? 0) + 1, (current[j - 1] ?? 0) + 1, (previous[j - 1] ?? 0) + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    previous = current;
  }
  return previous[b.length] ?? 0;
}

const SCHEME = /^([A-Za-z][A-Za-z0-9+.-]*):(.*)$/s;
const CLAIM_FORM = 'write a claim as [words](reading:key) or [words](clearance:key)';

type Classified = { kind: 'claim'; claimKind: ClaimKind; key: string } | { kind: 'broken'; message: string } | { kind: 'other' };

/**
 * Is `target` one of ours? A scheme within two letters of a kind ("clearence", "Reading",
 * "readings") is taken for a misspelt claim rather than some other link.
 */
function classifyTarget(target: string): Classified {
  const match = SCHEME.exec(target.trim());
  if (!match) return { kind: 'other' };
  const scheme = match[1] ?? '';
  const key = match[2] ?? '';
  if (isClaimKind(scheme)) {
    if (key.length === 0) return { kind: 'broken', message: `name the ${scheme} after "${scheme}:" (${CLAIM_FORM})` };
    if (!readingKeySchema.safeParse(key).success) {
      return { kind: 'broken', message: `"${key}" is not a key: keys are 1–40 letters, digits, - or _, starting with a letter` };
    }
    return { kind: 'claim', claimKind: scheme, key };
  }
  const lower = scheme.toLowerCase();
  if (claimKinds.some((kind) => editDistance(lower, kind) <= 2)) {
    return { kind: 'broken', message: `"${scheme}:" is not a kind of claim; ${CLAIM_FORM}` };
  }
  return { kind: 'other' };
}

/** Offsets of a link in the inline source of its block, recorded while markdown-it parses it. */
interface SourceSpan {
  srcStart: number;
  srcEnd: number;
}

type InlineRule = (state: StateInline, silent: boolean) => boolean;

/** Wraps one of markdown-it's inline rules so the link it makes records where it was in the source. */
function recordLinkSpans(md: MarkdownIt, name: string) {
  const rule = md.inline.ruler.__rules__.find((r) => r.name === name);
  if (!rule) throw new Error(`markdown-it has no inline rule "${name}"`);
  const original: InlineRule = rule.fn;
  md.inline.ruler.at(
    name,
    (state, silent) => {
      const start = state.pos;
      const before = state.tokens.length;
      const ok = original(state, silent);
      if (ok && !silent) {
        const open = state.tokens.slice(before).find((t) => t.type === 'link_open');
        if (open) open.meta = { ...(open.meta ?? {}), srcStart: start, srcEnd: state.pos } satisfies SourceSpan;
      }
      return ok;
    },
    { alt: rule.alt },
  );
}

/**
 * `[words](clearance:Bad Key)` is not a link to markdown-it (a destination has no spaces), but it
 * is plainly meant as a claim: catch it after the link rule has declined it.
 */
function brokenClaimRule(state: StateInline, silent: boolean): boolean {
  const start = state.pos;
  if (state.src.charCodeAt(start) !== 0x5b /* [ */) return false;
  const labelEnd = state.md.helpers.parseLinkLabel(state, start, true);
  if (labelEnd < 0 || state.src.charCodeAt(labelEnd + 1) !== 0x28 /* ( */) return false;
  const close = state.src.indexOf(')', labelEnd + 2);
  if (close < 0 || close >= state.posMax) return false;
  const target = state.src.slice(labelEnd + 2, close).trim();
  if (classifyTarget(target).kind === 'other') return false;
  if (!silent) {
    const token = state.push('claim_broken', 'span', 0);
    token.content = state.src.slice(start + 1, labelEnd);
    token.meta = { target, srcStart: start, srcEnd: close + 1 } satisfies SourceSpan & { target: string };
  }
  state.pos = close + 1;
  return true;
}

/** What a parse leaves in markdown-it's env. */
interface StoryEnv extends Env {
  lines: string[];
  lineStarts: number[];
  claims: ClaimRef[];
  broken: BrokenClaim[];
}

function lineOf(lineStarts: readonly number[], offset: number): number {
  let low = 0;
  let high = lineStarts.length - 1;
  while (low < high) {
    const mid = (low + high + 1) >> 1;
    if ((lineStarts[mid] ?? 0) <= offset) low = mid;
    else high = mid - 1;
  }
  return low + 1;
}

/**
 * Maps offsets in an inline token's content back to the source. The content is the block's lines
 * with their leading marks and indentation taken off, joined by newlines and trimmed, so each of
 * its lines is found at the end of (or, in headings and table cells, inside) its source line.
 * `fromColumn` is where to start looking on the first line (the next cell of a table row).
 */
function sourceMapper(content: string, firstLine: number, env: StoryEnv, fromColumn: number | null): (offset: number) => number {
  const starts: { content: number; source: number }[] = [];
  let contentOffset = 0;
  content.split('\n').forEach((text, i) => {
    const sourceLine = env.lines[firstLine + i] ?? '';
    let column: number;
    if (i === 0 && fromColumn !== null) column = Math.max(fromColumn, sourceLine.indexOf(text, fromColumn));
    else if (sourceLine.endsWith(text)) column = sourceLine.length - text.length;
    else if (sourceLine.trimEnd().endsWith(text)) column = sourceLine.trimEnd().length - text.length;
    else column = Math.max(0, sourceLine.indexOf(text));
    starts.push({ content: contentOffset, source: (env.lineStarts[firstLine + i] ?? 0) + column });
    contentOffset += text.length + 1;
  });
  return (offset) => {
    let entry = starts[0] ?? { content: 0, source: 0 };
    for (const candidate of starts) if (candidate.content <= offset) entry = candidate;
    return entry.source + (offset - entry.content);
  };
}

function plainText(children: readonly Token[], from: number): { text: string; closeIndex: number } {
  let depth = 0;
  let text = '';
  for (let i = from; i < children.length; i += 1) {
    const child = children[i];
    if (!child) continue;
    if (child.type === 'link_open') depth += 1;
    else if (child.type === 'link_close') {
      if (depth === 0) return { text, closeIndex: i };
      depth -= 1;
    } else if (child.type === 'softbreak' || child.type === 'hardbreak') text += ' ';
    else if (child.type === 'text' || child.type === 'text_special' || child.type === 'code_inline' || child.type === 'image') text += child.content;
  }
  return { text, closeIndex: children.length };
}

/**
 * Runs after inline parsing and before the typographer, so claim words are as the builder typed
 * them (`0.003"` keeps its straight quote). Marks claim and broken-claim tokens with their index.
 */
function collectClaims(state: StateCore) {
  const env = state.env as StoryEnv;
  // Table cells carry no line map of their own: they are found along their row, left to right.
  let row: { line: number; column: number } | null = null;
  for (const block of state.tokens) {
    if (block.type === 'tr_open' && block.map) row = { line: block.map[0], column: 0 };
    if (block.type !== 'inline' || !block.children) continue;
    let firstLine: number;
    let fromColumn: number | null = null;
    if (block.map) firstLine = block.map[0];
    else if (row) {
      firstLine = row.line;
      fromColumn = row.column;
      const found = (env.lines[row.line] ?? '').indexOf(block.content, row.column);
      if (found >= 0) row.column = found + block.content.length;
    } else continue;
    let map: ((offset: number) => number) | null = null;
    const span = (meta: SourceSpan) => {
      map ??= sourceMapper(block.content, firstLine, env, fromColumn);
      const start = map(meta.srcStart);
      return { start, end: map(meta.srcEnd), line: lineOf(env.lineStarts, start) };
    };
    const children = block.children;
    children.forEach((child, index) => {
      const meta = child.meta as Partial<SourceSpan & { target: string }> | null;
      if (!meta || meta.srcStart === undefined || meta.srcEnd === undefined) return;
      const where = span(meta as SourceSpan);
      if (child.type === 'claim_broken') {
        const target = meta.target ?? '';
        const classified = classifyTarget(target);
        const message = classified.kind === 'broken' ? classified.message : CLAIM_FORM;
        child.meta = { ...meta, brokenIndex: env.broken.length };
        env.broken.push({ target, text: child.content, ...where, message });
        return;
      }
      if (child.type !== 'link_open') return;
      const href = String(child.attrGet('href') ?? '');
      const target = state.md.normalizeLinkText(href);
      const classified = classifyTarget(target);
      if (classified.kind === 'other') return;
      const { text } = plainText(children, index + 1);
      if (child.markup === 'autolink') {
        child.meta = { ...meta, brokenIndex: env.broken.length };
        env.broken.push({ target, text, ...where, message: CLAIM_FORM });
      } else if (classified.kind === 'broken') {
        child.meta = { ...meta, brokenIndex: env.broken.length };
        env.broken.push({ target, text, ...where, message: classified.message });
      } else {
        child.meta = { ...meta, claimIndex: env.claims.length };
        env.claims.push({ kind: classified.claimKind, key: classified.key, text, ...where });
      }
    });
  }
}

/**
 * A markdown-it instance set up for story bodies: raw HTML shown as text, no linkify, the
 * typographer on, `:::caution` blocks, and claims marked on their tokens. The renderer's rules
 * are left to the caller (see `renderStory`).
 */
export function createStoryMarkdown(): MarkdownIt {
  const md = new markdownIt('default', { html: false, linkify: false, typographer: true });
  md.use(container, 'caution', { validate: (params: string) => /^caution(?:\s|$)/.test(params.trim()) });
  recordLinkSpans(md, 'link');
  recordLinkSpans(md, 'autolink');
  md.inline.ruler.after('link', 'claim_broken', brokenClaimRule);
  md.core.ruler.after('inline', 'story_claims', collectClaims);
  return md;
}

/** Token meta set on claim links (`claimIndex`) and broken claims (`brokenIndex`) by `parseStory`. */
export interface ClaimTokenMeta {
  claimIndex?: number;
  brokenIndex?: number;
}

/** Parses a body: its markdown-it tokens (claims marked, see `ClaimTokenMeta`), its claims and broken claims. */
export function parseStory(markdown: string, md: MarkdownIt = defaultMarkdown()): { tokens: Token[]; claims: ClaimRef[]; broken: BrokenClaim[] } {
  const lines = markdown.split(/\r\n|\r|\n/);
  const lineStarts: number[] = [];
  let offset = 0;
  for (const match of markdown.matchAll(/[^\r\n]*(\r\n|\r|\n|$)/g)) {
    if (lineStarts.length === lines.length) break;
    lineStarts.push(offset);
    offset += match[0].length;
  }
  const env: StoryEnv = { lines, lineStarts, claims: [], broken: [] };
  const tokens = md.parse(markdown, env);
  return { tokens, claims: env.claims, broken: env.broken };
}

let shared: MarkdownIt | null = null;
function defaultMarkdown(): MarkdownIt {
  shared ??= createStoryMarkdown();
  return shared;
}

/** The claims and broken claims in a body, in the order written. */
export function findClaims(markdown: string): { claims: ClaimRef[]; broken: BrokenClaim[] } {
  const { claims, broken } = parseStory(markdown);
  return { claims, broken };
}

/** The targets claims of a build can link to, keyed by `claimTargetKey`. Clearances that cannot be worked out are left out. */
export function claimTargetsFrom(readings: readonly ReadingDto[], clearances: readonly ClearanceDto[]): Map<string, ClaimTarget> {
  const targets = new Map<string, ClaimTarget>();
  for (const reading of readings) {
    // A reading is quoted at k = 2, like a clearance's default (GUM 6.2.1, 6.3.3).
    const quantity = reading.result.quantity ?? 'length';
    const isLength = quantity === 'length' && reading.result.valueUm !== null;
    const expandedUm = 2 * (reading.result.standardUncertaintyUm ?? 0);
    const expanded = isLength
      ? expandedUm / (Number(picometresPerUnit[reading.unit as LengthUnit]) / 1e6)
      : 2 * (reading.result.standardUncertainty ?? 0);
    targets.set(claimTargetKey('reading', reading.key), {
      kind: 'reading',
      key: reading.key,
      name: reading.name,
      quantity,
      unit: reading.unit,
      value: isLength ? (reading.result.valueUm ?? 0) / (Number(picometresPerUnit[reading.unit as LengthUnit]) / 1e6) : (reading.result.value ?? 0),
      expandedUncertainty: expanded,
      valueUm: reading.result.valueUm ?? 0,
      expandedUncertaintyUm: isLength ? expandedUm : 0,
      display: `${reading.result.display} ± ${isLength ? formatUncertainty(expandedUm, reading.unit as LengthUnit) : formatUncertaintyIn(expanded, reading.unit)} (k = 2)`,
      verdict: null,
      momentId: reading.momentId,
      clipId: reading.clipId,
      atMs: reading.atMs,
      frameUrl: reading.frameUrl,
    });
  }
  for (const clearance of clearances) {
    const result = clearance.result;
    if (!result) continue;
    const figures = resultFigures(result);
    targets.set(claimTargetKey('clearance', clearance.key), {
      kind: 'clearance',
      key: clearance.key,
      name: clearance.name,
      quantity: figures.quantity ?? 'length',
      unit: result.unit,
      value: figures.value,
      expandedUncertainty: figures.expandedUncertainty,
      valueUm: result.valueUm ?? 0,
      expandedUncertaintyUm: result.expandedUncertaintyUm ?? 0,
      display: result.display,
      verdict: result.verdict,
      momentId: null,
      clipId: null,
      atMs: null,
      frameUrl: null,
    });
  }
  return targets;
}

/** A verdict stated in words. */
interface StatedVerdict {
  text: string;
  verdict: Verdict;
}

// Negations first, and each match blanked out, so "not within spec" is not also read as "within spec".
const verdictPhrases: readonly { pattern: RegExp; verdict: Verdict }[] = [
  { pattern: /\b(?:not|isn['’]t|is\s+not)\s+(?:within|in|inside)\s+(?:the\s+)?spec\b/giu, verdict: 'does-not-conform' },
  { pattern: /\b(?:out\s+of|outside(?:\s+of)?)\s+(?:the\s+)?spec\b/giu, verdict: 'does-not-conform' },
  { pattern: /\btoo\s+close\s+to\s+call\b/giu, verdict: 'undecided' },
  { pattern: /\b(?:within|in|inside)\s+(?:the\s+)?spec\b/giu, verdict: 'conforms' },
];

function findStatedVerdicts(text: string): StatedVerdict[] {
  let rest = text;
  const found: (StatedVerdict & { index: number })[] = [];
  for (const { pattern, verdict } of verdictPhrases) {
    rest = rest.replace(pattern, (match: string, index: number) => {
      found.push({ text: match, verdict, index });
      return ' '.repeat(match.length);
    });
  }
  return found.sort((a, b) => a.index - b.index);
}

function exactDecimals(pm: bigint, unit: LengthUnit): number {
  for (let d = 0; d < 12; d += 1) if ((pm * 10n ** BigInt(d)) % picometresPerUnit[unit] === 0n) return d;
  return 12;
}

function intervalText(stated: StatedLength): string {
  // A half step is a whole number of picometres in every unit at the places people write.
  const half = stated.stepPm / 2n;
  const low = stated.pm - half;
  const high = stated.pm + half;
  const decimals = Math.max(exactDecimals(low, stated.unit), exactDecimals(high, stated.unit));
  const highText = formatNumber(high, stated.unit, decimals);
  return `${formatNumber(low, stated.unit, decimals)}–${highText} ${symbolFor(stated.unit, highText)}`;
}

const kindWords: Readonly<Record<ClaimKind, string>> = { reading: 'reading', clearance: 'clearance' };

/**
 * Checks a claim's words against its target. A stated length means the interval its own rounding
 * implies (see `findStatedLengths`); it disagrees when that interval and value ± U do not overlap.
 * Common practice (no published source): this is our reading of a figure quoted in prose, not a
 * rule from a standard. Every stated length must agree, so a sentence with two figures is linked
 * to two claims rather than passing on the strength of one.
 */
export function checkClaim(claim: ClaimRef, targets: ReadonlyMap<string, ClaimTarget>): ClaimStatus {
  const target = targets.get(claimTargetKey(claim.kind, claim.key));
  if (!target) {
    return { state: 'unknown-target', message: `This build has no ${kindWords[claim.kind]} "${claim.key}" that can be worked out.` };
  }
  if (target.quantity !== 'length') {
    const problem = checkStatedFigures(claim.text, target);
    if (problem) return problem;
    return checkStatedVerdicts(claim.text, target);
  }
  const valuePm = micrometresToPicometres(target.valueUm);
  const expandedPm = micrometresToPicometres(target.expandedUncertaintyUm);
  for (const stated of findStatedLengths(claim.text)) {
    const low2 = 2n * stated.pm - stated.stepPm;
    const high2 = 2n * stated.pm + stated.stepPm;
    const overlaps = high2 >= 2n * (valuePm - expandedPm) && low2 <= 2n * (valuePm + expandedPm);
    if (!overlaps) {
      return {
        state: 'number-disagrees',
        statedUm: Number(stated.pm) / 1e6,
        message: `“${stated.text}” means ${intervalText(stated)}; the ${kindWords[target.kind]} is ${target.display}, and the two do not overlap.`,
      };
    }
  }
  return checkStatedVerdicts(claim.text, target);
}

function checkStatedVerdicts(text: string, target: ClaimTarget): ClaimStatus {
  for (const stated of findStatedVerdicts(text)) {
    if (target.verdict === null) {
      return {
        state: 'verdict-disagrees',
        message: `“${stated.text}” needs a spec, and this ${kindWords[target.kind]} is not judged against one.`,
      };
    }
    if (stated.verdict !== target.verdict) {
      return {
        state: 'verdict-disagrees',
        message: `“${stated.text}” says ${verdictWords[stated.verdict]}, but the ${kindWords[target.kind]} is ${verdictWords[target.verdict]} (${target.display}).`,
      };
    }
  }
  return { state: 'ok' };
}

/** A figure of another quantity stated in a claim: "64.2 cc", "35 lb-ft", "10.2:1". */
export interface StatedFigure {
  readonly text: string;
  readonly index: number;
  readonly unit: AnyUnit;
  readonly value: Fraction;
  /** One step of its last digit, in `unit`: the statement means value ± step / 2. */
  readonly step: Fraction;
}

const escapeRegExp = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

/** Each quantity's unit spellings as one pattern, longest first so "lb-ft" wins over "lb". */
function unitPattern(quantity: QuantityKind): RegExp | null {
  const spellings = (Object.entries(otherUnitAliases) as [AnyUnit, readonly string[]][])
    .filter(([unit]) => quantityOf(unit) === quantity)
    .flatMap(([unit, aliases]) => aliases.map((a) => ({ unit, a })))
    .sort((x, y) => y.a.length - x.a.length);
  if (spellings.length === 0) return null;
  const alternatives = spellings.map(({ a }) => escapeRegExp(a)).join('|');
  // After the unit: not a letter (so "5 s" is seconds but "5 seconds" still matches whole).
  return new RegExp(`(?<![\\w.])([+-−]?\\d+(?:\\.\\d+)?)\\s?(${alternatives})(?![\\p{L}\\d])`, 'giu');
}

/** Every figure of `quantity` that `text` states in digits with one of its units, in the order written. */
export function findStatedFigures(text: string, quantity: QuantityKind): StatedFigure[] {
  const pattern = unitPattern(quantity);
  if (!pattern) return [];
  const found: StatedFigure[] = [];
  for (const match of text.matchAll(pattern)) {
    const numberText = (match[1] ?? '').replace('−', '-');
    const spelled = (match[2] ?? '').toLowerCase();
    const unit = (Object.entries(otherUnitAliases) as [AnyUnit, readonly string[]][]).find(([, aliases]) => aliases.includes(spelled))?.[0];
    const decimal = parseDecimalText(numberText);
    if (!unit || !decimal) continue;
    found.push({ text: match[0], index: match.index ?? 0, unit, value: fractionOfDecimal(decimal), step: new Fraction(1n, 10n ** BigInt(decimal.scale)) });
  }
  return found;
}

/**
 * The figures a claim states of its target's quantity, each against value ± U: the stated
 * figure means the interval its own rounding implies, converted exactly into the target's unit
 * (NIST SP 811 B.8); it disagrees when that interval and value ± U do not overlap. The same rule
 * as for lengths (common practice, no published source).
 */
function checkStatedFigures(text: string, target: ClaimTarget): ClaimStatus | null {
  for (const stated of findStatedFigures(text, target.quantity)) {
    const half = stated.step.div(2);
    const low = convertExact(stated.value.sub(half), stated.unit, target.unit).valueOf();
    const high = convertExact(stated.value.add(half), stated.unit, target.unit).valueOf();
    const [lo, hi] = low <= high ? [low, high] : [high, low];
    const slack = 1e-12 * Math.max(1, Math.abs(target.value));
    if (hi + slack < target.value - target.expandedUncertainty || lo - slack > target.value + target.expandedUncertainty) {
      const decimals = stated.step.d.toString().length;
      const symbol = unitTable[stated.unit].symbol;
      const range = `${fractionToFixed(stated.value.sub(half), decimals)}–${fractionToFixed(stated.value.add(half), decimals)}${symbol ? ` ${symbol}` : ''}`;
      return {
        state: 'number-disagrees',
        statedUm: null,
        message: `“${stated.text}” means ${range}; the ${kindWords[target.kind]} is ${target.display}, and the two do not overlap.`,
      };
    }
  }
  return null;
}
