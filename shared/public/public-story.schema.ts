/**
 * The public side of stories: what anyone may read once a moderator has published a story.
 *
 * Everything here comes from a publication (the revision as published, with the figures of its
 * claims as judged then), never from the builder's live readings. A story is public while it has
 * a publication and has not been withdrawn; a newer revision in review leaves the old one public.
 */
import { z } from 'zod';
import { DB_INTEGER_MAX, dbIdText, instantIdCursor, textWithoutNul } from '../http/db-values.schema';
import { bandInUnitSchema, bandUmSchema, coverageResultFields } from '../clearances/clearance.schema';
import { calibrationStates } from '../instruments/instrument.schema';
import { anyUnitSchema, calcInstrumentSchema, readingSchema as engineReadingSchema } from '../measure/calc.schema';
import { unitSystems } from '../measure/format';
import { quantityKinds } from '../measure/quantities';
import { readingUnitSchema } from '../measure/record-units';
import { decisionRules, verdicts } from '../measure/spec';
import { readingKinds, readingWarningSchema } from '../readings/reading.schema';
import { heardStates } from '../review/heard-states';
import { storyTagsSchema } from '../stories/story.schema';

/** A keyset cursor over (publishedAt, publication id): opaque to clients, pass back as `before`. */
export const publicCursorSchema = instantIdCursor('before must be a cursor from a previous page');

/** A reader's measuring system for figures shown beside the builder's own (`?units=`); absent = as entered. */
export const unitsQuerySchema = z.enum(unitSystems, { error: 'units must be "imperial" or "metric"' });

/** The verdict filter of the public list: stories with at least one clearance out of spec. */
export const publicVerdictFilters = ['out-of-spec'] as const;

const searchCursorPattern = /^([ws])_((?:0|[1-9]\d*)(?:\.\d+)?(?:e[-+]?\d{1,3})?)_([1-9]\d{0,9})$/;

/** A search cursor's parts: how the page was matched, the last item's rank and publication id. */
export interface SearchCursor {
  match: 'words' | 'similar';
  rank: number;
  publicationId: number;
}

/**
 * Reads a cursor of a searched list (`<w|s>_<rank>_<publication id>`), or null when it is not one.
 * The server alone writes them (`searchCursorText`); clients pass them back untouched.
 */
export function readSearchCursor(text: string): SearchCursor | null {
  const m = searchCursorPattern.exec(text);
  if (!m) return null;
  const rank = Number(m[2]);
  const publicationId = Number(m[3]);
  if (!Number.isFinite(rank) || publicationId > DB_INTEGER_MAX) return null;
  return { match: m[1] === 'w' ? 'words' : 'similar', rank, publicationId };
}

/** The cursor after an item of a searched list. */
export function searchCursorText(c: SearchCursor): string {
  return `${c.match === 'words' ? 'w' : 's'}_${String(c.rank)}_${c.publicationId}`;
}

const badCursor = 'before must be a cursor from a previous page';

/**
 * Query of `GET /api/public/stories` and `GET /api/public/stories/following`: newest published
 * first, or, with `q`, best match first. `before` is the `nextBefore` of the previous page of the
 * same list: a time-and-id cursor without `q`, a rank-and-id cursor with it (anything else is 400).
 */
export const publicStoryListQuerySchema = z
  .object({
    before: z.string().optional(),
    limit: z.coerce.number().int().min(1, 'limit is at least 1').max(50, 'limit is at most 50').default(20),
    /** A tag in any group (machine, component or operation), matched exactly. */
    tag: textWithoutNul.trim().min(1).max(40, 'a tag is at most 40 characters').optional(),
    /** A builder's login. */
    builder: textWithoutNul.trim().min(1).max(64).optional(),
    verdict: z.enum(publicVerdictFilters, { error: 'verdict must be "out-of-spec"' }).optional(),
    /**
     * Words to find (websearch syntax: "a phrase", or, -word) in everything a published story says:
     * title, summary, claims, reading and clearance names, parts and serials, tags, text, builder.
     * Figures and serials match whole (`0.0047`, `VP-0417`). When no story has the words, titles and
     * summaries containing the text, and titles that look like it, are listed instead.
     */
    q: textWithoutNul.trim().min(1).max(100, 'search for at most 100 characters').optional(),
  })
  .superRefine((v, ctx) => {
    if (v.before === undefined) return;
    const ok = v.q === undefined ? publicCursorSchema.safeParse(v.before).success : readSearchCursor(v.before) !== null;
    if (!ok) ctx.addIssue({ code: 'custom', path: ['before'], message: badCursor });
  });
export type PublicStoryListQuery = z.infer<typeof publicStoryListQuerySchema>;

/** A builder as the public sees them. */
export const publicBuilderRefSchema = z.object({
  id: z.number().int().positive(),
  login: z.string(),
  displayName: z.string(),
  shop: z.string().nullable(),
});
export type PublicBuilderRef = z.infer<typeof publicBuilderRefSchema>;

/** One published story in a list. */
export const publicStoryListItemSchema = z.object({
  storyId: z.number().int().positive(),
  /** The publication's number: 1 for the first published revision, 2 for the next… */
  revision: z.number().int().positive(),
  title: z.string(),
  summary: z.string(),
  /** The public evidence still of the cover moment, or null. */
  coverUrl: z.string().nullable(),
  tags: storyTagsSchema,
  workDate: z.string().nullable(),
  publishedAt: z.string(),
  builder: publicBuilderRefSchema,
  build: z.object({ id: z.number().int().positive(), title: z.string() }),
  claimCount: z.number().int().nonnegative(),
  /** Some clearance in its evidence is out of spec (verdict `does-not-conform`). */
  outOfSpec: z.boolean(),
  /**
   * With `q`: words of the story around what matched, plain text with each match between
   * SNIPPET_MARK_START and SNIPPET_MARK_END (shared/public/search-snippet.ts); show as text. Null
   * without `q` or when the story was found by a similar title rather than by its words.
   */
  snippet: z.string().nullable(),
  /** With `q`: how well it matched (higher first); null without `q`. */
  rank: z.number().nullable(),
});
export type PublicStoryListItem = z.infer<typeof publicStoryListItemSchema>;

/** Response of the public story lists; `nextBefore` is null on the last page. */
export const publicStoryListResponseSchema = z.object({
  items: z.array(publicStoryListItemSchema),
  nextBefore: z.string().nullable(),
  /**
   * How `q` was matched: `words` (full text, best first), `similar` (no story has the words: titles
   * and summaries containing the text, and titles like it); null without `q`.
   */
  searchMatch: z.enum(['words', 'similar']).nullable(),
});
export type PublicStoryListResponse = z.infer<typeof publicStoryListResponseSchema>;

/** Path parameters naming a story. */
export const publicStoryParamsSchema = z.object({ storyId: dbIdText });
/** Query of `GET /api/public/stories/:storyId`. */
export const publicStoryQuerySchema = z.object({ units: unitsQuerySchema.optional() });

/** Who checked a reading or clearance against the footage, and when (as recorded at publication). */
export const publicCheckSchema = z.object({
  by: z.number().int().positive(),
  byName: z.string(),
  at: z.string(),
  /** The version of the reading or clearance that was checked. */
  lockVersion: z.number().int().positive(),
});

/** Where a reading was taken in its clip, with the public media addresses. */
export const publicMomentSchema = z.object({
  momentId: z.number().int().positive(),
  clipId: z.number().int().positive(),
  clipTitle: z.string(),
  atMs: z.number().int().nonnegative(),
  /** The evidence still at that moment: `/api/public/clips/:clipId/frame?t=…`. */
  stillUrl: z.string(),
  /** The clip, playable with Range requests: `/api/public/clips/:clipId/video`. */
  clipUrl: z.string(),
  posterUrl: z.string(),
});

/**
 * A reading as judged: the texts as entered, the instrument, and the engine's working. Any
 * quantity: a length carries its figures in µm as well (`valueUm`…), every reading its estimate
 * and uncertainties in its own unit (`estimate`…). Publications made before other quantities
 * could be stored are lengths with the µm figures only; they still parse (`quantity` defaults to
 * length, the figures in the unit are then absent).
 */
export const publicReadingSchema = z.object({
  id: z.number().int().positive(),
  key: z.string(),
  name: z.string(),
  kind: z.enum(readingKinds),
  /** What it measures. */
  quantity: z.enum(quantityKinds).default('length'),
  unit: readingUnitSchema,
  /** The texts exactly as the builder typed them. */
  entered: z.record(z.string(), z.union([z.string(), z.array(z.string())])),
  value: z.string().nullable(),
  passes: z.string().nullable(),
  stops: z.string().nullable(),
  values: z.array(z.string()).nullable(),
  /** "0.5642 in ± 0.00012 in (k = 2)", "35 lbf·ft ± 1.2 lbf·ft (k = 2)". */
  display: z.string(),
  /** The same figure in the reader's system when `units` asks for the other one; null otherwise. */
  converted: z.string().nullable(),
  /** Lengths only (null for any other quantity): the estimate, u and U in µm. */
  valueUm: z.number().nullable(),
  standardUncertaintyUm: z.number().nonnegative().nullable(),
  /** U = 2u, as claims are checked (GUM 6.2.1, 6.3.3). */
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  /** The estimate, u and U = 2u in `unit`, for every quantity (absent from older publications' pages). */
  estimate: z.number().optional(),
  standardUncertainty: z.number().nonnegative().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
  steps: z.array(z.string()),
  takenOn: z.string(),
  temperatureC: z.number().nullable(),
  material: z.string().nullable(),
  part: z.object({ id: z.number().int().positive(), name: z.string() }).nullable(),
  instrument: z.object({
    id: z.number().int().positive(),
    name: z.string(),
    /** On the day of the reading, from the warnings recorded when it was judged. */
    calibration: z.enum(calibrationStates),
  }),
  zeroCheck: z.object({ offset: z.string(), unit: readingUnitSchema }).nullable(),
  warnings: z.array(readingWarningSchema),
  moment: publicMomentSchema,
  checked: publicCheckSchema,
  /**
   * The engine's input for this reading as judged (instrument resolution, stated uncertainty and
   * zero offset filled in), so a reader can run it through POST /api/calc again.
   */
  engine: engineReadingSchema.optional(),
  /** The instrument entry `engine.instrument` names (calibration, MPE, setting standard), when there is one. */
  engineInstrument: z.object({ name: z.string(), entry: calcInstrumentSchema }).optional(),
  /**
   * What the clip's sound said near the reading's moment when it was published
   * (`shared/review/heard.ts`): `agrees` when the builder was heard saying the figure logged, with
   * the words and when (ms from the clip's start). Absent from publications made before it.
   */
  heard: z
    .object({
      state: z.enum(heardStates),
      words: z.string().optional(),
      atMs: z.number().int().nonnegative().optional(),
      /** Said, or shown on the instrument's display (absent: said). */
      source: z.enum(['speech', 'display']).optional(),
    })
    .optional(),
});
export type PublicReading = z.infer<typeof publicReadingSchema>;

/**
 * A result ("clearance") as judged: value, U, verdict by its rule against a cited spec version,
 * and the working. A signed sum of readings or a formula over them, of any quantity: a length
 * carries its figures in µm (`valueUm`…, `band`), every result its figures in `unit` (`value`…,
 * `bandInUnit`). Older publications (lengths, µm only) still parse.
 */
export const publicClearanceSchema = z.object({
  id: z.number().int().positive(),
  key: z.string(),
  name: z.string(),
  /** What it is; a ratio's unit is "1". */
  quantity: z.enum(quantityKinds).default('length'),
  unit: anyUnitSchema,
  /** Lengths only (null for any other quantity): value, u and U in µm. */
  valueUm: z.number().nullable(),
  standardUncertaintyUm: z.number().nonnegative().nullable(),
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  /** Value, u, U and the coverage interval in `unit` (absent from older publications' pages). */
  value: z.number().optional(),
  standardUncertainty: z.number().nonnegative().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
  interval: z.tuple([z.number(), z.number()]).optional(),
  coverageFactor: z.number(),
  /** "0.0047 in ± 0.00031 in (k = 2)", "10.19 ± 0.11 (95 %, k = 2.03)". */
  display: z.string(),
  converted: z.string().nullable(),
  verdict: z.enum(verdicts).nullable(),
  preferredVerdict: z.enum(verdicts).nullable(),
  rejectVerdict: z.enum(verdicts).nullable(),
  rule: z.enum(decisionRules).nullable(),
  /** The spec's limits in µm, for the band picture of a length. */
  band: bandUmSchema.nullable(),
  /** The spec's limits in `unit`, for the band picture of any quantity. */
  bandInUnit: bandInUnitSchema.nullable().optional(),
  spec: z
    .object({ name: z.string(), version: z.number().int().positive(), sourceKind: z.string(), sourceText: z.string() })
    .nullable(),
  /** A formula's term symbols are the names the formula uses; a sum's terms carry their signs. */
  terms: z.array(
    z.object({
      readingId: z.number().int().positive(),
      readingKey: z.string(),
      readingName: z.string(),
      sign: z.union([z.literal(1), z.literal(-1)]),
      symbol: z.string().nullable().optional(),
    }),
  ),
  /** The formula over the terms' symbols and the constants; null (or absent) for a signed sum. */
  formula: z.string().nullable().optional(),
  constants: z.record(z.string(), z.object({ value: z.union([z.string(), z.number()]), unit: anyUnitSchema })).optional(),
  /** The unit the builder asked the result in; null for the spec's or the natural one. */
  resultUnit: anyUnitSchema.nullable().optional(),
  steps: z.array(z.string()),
  checked: publicCheckSchema,
  /** The second engine's figures; absent from clearances judged before it. */
  ...coverageResultFields,
});
export type PublicClearance = z.infer<typeof publicClearanceSchema>;

/** Claim states as the publish gate left them (a published story's claims all agree). */
export const publicClaimStates = ['ok', 'unknown-target', 'number-disagrees', 'verdict-disagrees'] as const;

/** A claim of a published story with its evidence. `anchor` is the id its link in `html` points at. */
export const publicClaimSchema = z.object({
  kind: z.enum(['reading', 'clearance']),
  key: z.string(),
  text: z.string(),
  line: z.number().int().positive(),
  /** `claim-clearance-end-float`: the link in `html` is `href="#<anchor>"`. */
  anchor: z.string(),
  state: z.enum(publicClaimStates),
  display: z.string().nullable(),
  verdict: z.enum(verdicts).nullable(),
  /** The clearance a clearance claim links to; null for a reading claim. */
  clearance: publicClearanceSchema.nullable(),
  /** The reading a reading claim links to, or the readings of the clearance's terms. */
  readings: z.array(publicReadingSchema),
});
export type PublicClaim = z.infer<typeof publicClaimSchema>;

/** A part of a build, with the address of its inspection sheet. */
export const publicPartSchema = z.object({
  id: z.number().int().positive(),
  name: z.string(),
  serial: z.string(),
  /** `/api/public/parts/:partId/sheet`; null when no public entry has a reading on the part. */
  sheetUrl: z.string().nullable(),
  /** `/sheets/parts/:partId.pdf`; null as for sheetUrl. */
  pdfUrl: z.string().nullable(),
});

/** Response of `GET /api/public/stories/:storyId`: the current publication, rendered. */
export const publicStorySchema = z.object({
  storyId: z.number().int().positive(),
  revision: z.number().int().positive(),
  publicationId: z.number().int().positive(),
  title: z.string(),
  summary: z.string(),
  tags: storyTagsSchema,
  workDate: z.string().nullable(),
  coverUrl: z.string().nullable(),
  publishedAt: z.string(),
  /** The moderator who published it. */
  publisher: z.object({ id: z.number().int().positive(), displayName: z.string() }),
  /** Sanitized HTML of the body (renderStory), claims as `<a class="claim" href="#…">`. */
  html: z.string(),
  claims: z.array(publicClaimSchema),
  /** The note shown under every story (STANDING_NOTE). */
  standingNote: z.string(),
  /** The system `converted` figures are in, or null when figures are only as entered. */
  units: unitsQuerySchema.nullable(),
  build: z.object({
    id: z.number().int().positive(),
    title: z.string(),
    subject: z.string(),
    parts: z.array(publicPartSchema),
  }),
  builder: publicBuilderRefSchema,
  /** The builder's Atom feed, `/feeds/builders/<login>.atom`. */
  feedUrl: z.string(),
});
export type PublicStory = z.infer<typeof publicStorySchema>;

/** Public media of a clip cited by a published story. */
export const publicClipParamsSchema = z.object({ clipId: dbIdText });
