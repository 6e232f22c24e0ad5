/**
 * A build and a builder as the public sees them: only what published stories made public.
 */
import { z } from 'zod';
import { dbIdText } from '../http/db-values.schema';
import { anyUnitSchema } from '../measure/calc.schema';
import { quantityKinds } from '../measure/quantities';
import { decisionRules, verdicts } from '../measure/spec';
import { publicBuilderRefSchema, publicPartSchema } from './public-story.schema';

/** Path parameters of `GET /api/public/builds/:buildId`. */
export const publicBuildParamsSchema = z.object({ buildId: dbIdText });

/** One public diary entry of a build (its current publication). */
export const publicBuildEntrySchema = z.object({
  storyId: z.number().int().positive(),
  revision: z.number().int().positive(),
  title: z.string(),
  summary: z.string(),
  workDate: z.string().nullable(),
  publishedAt: z.string(),
  coverUrl: z.string().nullable(),
});
export type PublicBuildEntry = z.infer<typeof publicBuildEntrySchema>;

/** A clearance's figures as one entry published them. */
export const publicClearanceFigureSchema = z.object({
  storyId: z.number().int().positive(),
  revision: z.number().int().positive(),
  storyTitle: z.string(),
  workDate: z.string().nullable(),
  /** Lengths only (null for any other quantity): the value and U in µm. */
  valueUm: z.number().nullable(),
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  /** The value and U in the summary's unit, for every quantity (absent from older pages). */
  value: z.number().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
  /** "0.0047 in ± 0.00031 in (k = 2)". */
  display: z.string(),
  verdict: z.enum(verdicts).nullable(),
  rule: z.enum(decisionRules).nullable(),
  spec: z.object({ name: z.string(), version: z.number().int().positive(), sourceText: z.string() }).nullable(),
});
export type PublicClearanceFigure = z.infer<typeof publicClearanceFigureSchema>;

/**
 * Every checked clearance of the build's public entries, by clearance key: the first and the
 * latest figures (in work-date order) and each entry that published it, so a reader can follow a
 * figure from strip-down to first start.
 */
export const publicClearanceSummarySchema = z.object({
  key: z.string(),
  name: z.string(),
  /** What it is; results of other quantities than a length carry their figures in `unit`. */
  quantity: z.enum(quantityKinds).default('length'),
  unit: anyUnitSchema,
  first: publicClearanceFigureSchema,
  latest: publicClearanceFigureSchema,
  entries: z.array(publicClearanceFigureSchema),
});
export type PublicClearanceSummary = z.infer<typeof publicClearanceSummarySchema>;

/** Response of `GET /api/public/builds/:buildId` (404 when none of its stories is public). */
export const publicBuildSchema = z.object({
  id: z.number().int().positive(),
  title: z.string(),
  subject: z.string(),
  builder: publicBuilderRefSchema,
  parts: z.array(publicPartSchema),
  /** Oldest work first (entries without a work date go last, by publication time). */
  entries: z.array(publicBuildEntrySchema),
  clearances: z.array(publicClearanceSummarySchema),
});
export type PublicBuild = z.infer<typeof publicBuildSchema>;

/** Path parameters of `GET /api/public/builders/:login`. */
export const publicBuilderParamsSchema = z.object({ login: z.string().trim().min(1).max(64) });

/** A build on a builder's profile, with how much of it is public. */
export const publicBuilderBuildSchema = z.object({
  id: z.number().int().positive(),
  title: z.string(),
  subject: z.string(),
  entryCount: z.number().int().positive(),
  latestPublishedAt: z.string(),
  coverUrl: z.string().nullable(),
});

/** Response of `GET /api/public/builders/:login` (404 for unknown logins and for accounts that do not build). */
export const publicBuilderProfileSchema = z.object({
  id: z.number().int().positive(),
  login: z.string(),
  displayName: z.string(),
  shop: z.string().nullable(),
  bio: z.string().nullable(),
  avatarUrl: z.string().nullable(),
  followerCount: z.number().int().nonnegative(),
  /** Builds with at least one public entry, the most recently published first. */
  builds: z.array(publicBuilderBuildSchema),
  /** Whether the signed-in caller follows this builder; null when signed out (or it is their own profile). */
  following: z.boolean().nullable(),
  /** Whether the caller gets mail when this builder publishes; null unless `following`. */
  emailOnPublish: z.boolean().nullable(),
  feedUrl: z.string(),
});
export type PublicBuilderProfile = z.infer<typeof publicBuilderProfileSchema>;
