import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { listRoutes } from '../../../server/http/routes';
import { Follow } from '../../../server/features/follows/follow.model';
import { Question } from '../../../server/features/questions/question.model';
import { ClipUpload } from '../../../server/features/clips/clip-upload.model';
import { Clip } from '../../../server/features/clips/clip.model';
import { Reading } from '../../../server/features/readings/reading.model';
import { DisplayRegionRow, ProposalDismissal } from '../../../server/features/speech/speech.model';
import { CaptionCorrection } from '../../../server/features/speech/corrections.model';
import { listeningOf, storeClipWords } from '../../../server/features/speech/speech.service';
import { makeTestClip } from '../../support/clips';
import {
  actors,
  buildMatrixFixtures,
  makeTestPng,
  sessionFor,
  storyLockVersion,
  type Actor,
  type MatrixFixtures,
  type Session,
} from '../../support/matrix-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';
import { createUpload, headUpload } from '../../support/tus';

/*
 * The authorization matrix: every route the app mounts (from listRoutes(), so a new route
 * cannot be missed) × six callers, with the status each must get.
 *
 * OWASP ASVS 5.0.0, chapter V8 Authorization (section numbers checked against the v5.0.0 text
 * in OWASP/ASVS, 5.0/en/0x17-V8-Authorization.md, not recalled from memory):
 *  - V8.1 Authorization Documentation, 8.1.1: the rules for function-level and data-specific
 *    access are written down. TABLE below is that document for the API, and the test fails
 *    when it and the router disagree.
 *  - V8.2 General Authorization Design, 8.2.1 (function-level access only with explicit
 *    permission: the role columns, 401/403) and 8.2.2 (data-specific access only to the data
 *    items one is entitled to, against IDOR/BOLA: the other-builder and follower columns on
 *    the ids of the owner's build and everything in it, 404).
 *  - V8.3 Operation Level Authorization, 8.3.1: enforced in the server, whatever the client
 *    does; every request here is made directly against the API, no UI involved.
 *
 * Admin column: access.role() lets admins through every role check, so an admin reaches every
 * service; there the rule is that nobody writes in a builder's name (buildForOwner(…, 'change'),
 * instrumentForOwner, specForOwner, storyForOwner answer 403 to an admin), while an admin may take
 * content down (buildForOwner(…, 'take-down'): clips, moments, readings, clearances) and may let go
 * of a moderator's hold on a story.
 *
 * Statuses: 401 not signed in; 403 signed in but the role may not do this, or the caller may see
 * the thing but not change it (a reviewer on a builder's figures); 404 signed in and the role
 * may, but this build/clip/moment/instrument/spec/reading/clearance/story is not theirs to see
 * (its existence is not confirmed, the same answer as for an unknown id).
 */

type Expected = Record<Actor, number>;

// prettier-ignore
const TABLE: Record<string, Expected> = {
  // Public by design: sign-in, sign-out, health, CSRF token, the calculator.
  'GET /auth/github':                        { anonymous: 302, follower: 302, owner: 302, otherBuilder: 302, moderator: 302, admin: 302 },
  'GET /auth/github/callback':               { anonymous: 302, follower: 302, owner: 302, otherBuilder: 302, moderator: 302, admin: 302 },
  'POST /auth/sign-out':                     { anonymous: 204, follower: 204, owner: 204, otherBuilder: 204, moderator: 204, admin: 204 },
  'GET /api/health':                         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/csrf-token':                     { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'POST /api/calc':                          { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // access.public, but answers 401 itself to a visitor.
  'GET /api/me':                             { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },

  // Admin only.
  'GET /api/admin/users':                    { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },
  'PATCH /api/admin/users/:id':              { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },
  // What the local capture server received: admin only (the test app runs its own capture server).
  'GET /api/admin/outbox':                   { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 403, admin: 200 },

  // Builds. Listing and creating: role builder (admins pass every role check); the list is the caller's own.
  'GET /api/builds':                         { anonymous: 401, follower: 403, owner: 200, otherBuilder: 200, moderator: 403, admin: 200 },
  'POST /api/builds':                        { anonymous: 401, follower: 403, owner: 201, otherBuilder: 201, moderator: 403, admin: 201 },
  // Reading one: its builder and reviewers (moderator, admin); everyone else 404.
  'GET /api/builds/:buildId':                { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  // Changing or adding: only the builder (a build's figures are the builder's own; nobody,
  // admins included, writes in their name). Deleting: the builder, or an admin taking content down.
  'PATCH /api/builds/:buildId':              { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },

  // A build's clips.
  'GET /api/builds/:buildId/clips':          { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/clips':         { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'PUT /api/builds/:buildId/clips/order':    { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  // Resumable uploads (tus), as for uploading a clip: only the build's builder starts one, asks
  // where it stands, continues it or cancels it; an admin passes the role check and is refused
  // there (nobody writes in a builder's name). HEAD answers carry no body, only the status.
  'POST /api/builds/:buildId/uploads':             { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'HEAD /api/builds/:buildId/uploads/:uploadId':   { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'PATCH /api/builds/:buildId/uploads/:uploadId':  { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/builds/:buildId/uploads/:uploadId': { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },

  // One clip and its media: reading as for its build; changing as for its build.
  'GET /api/clips/:clipId':                  { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/clips/:clipId':                { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clips/:clipId':               { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },
  'GET /api/clips/:clipId/video':            { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/poster':           { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/thumbnails':       { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/frame':            { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/chapters.vtt':     { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/moments':          { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/clips/:clipId/moments':         { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  // What was heard and read in a clip (transcript, captions, suggested readings): read as the clip is.
  'GET /api/clips/:clipId/transcript':       { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/captions.vtt':     { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/clips/:clipId/suggestions':      { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  // Setting a suggested reading aside and bringing it back, and marking where the display is: the
  // build's builder only, as for marking a moment (an admin passes the role check and is refused
  // there; others' clips 404).
  'POST /api/clips/:clipId/suggestions/:id/dismiss':   { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clips/:clipId/suggestions/:id/dismiss': { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'PUT /api/clips/:clipId/display-region':    { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clips/:clipId/display-region': { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  // Caption corrections: read as the clip is; made and removed by the build's builder only, as
  // for dismissing a suggestion (an admin passes the role check and is refused there).
  'GET /api/clips/:clipId/caption-corrections':                   { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/clips/:clipId/caption-corrections':                  { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clips/:clipId/caption-corrections/:correctionId':  { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },

  // Moments: changed through their clip's build.
  'PATCH /api/moments/:momentId':            { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/moments/:momentId':           { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },

  // The instrument register. The list and new entries: role builder, the caller's own register
  // (an admin's is empty but theirs). One instrument and its zero checks: its keeper and
  // reviewers read (a moderator checks the readings taken with it); only its keeper changes it
  // or logs a zero check, admins included in the refusal; others' ids answer 404.
  'GET /api/instruments':                    { anonymous: 401, follower: 403, owner: 200, otherBuilder: 200, moderator: 403, admin: 200 },
  'POST /api/instruments':                   { anonymous: 401, follower: 403, owner: 201, otherBuilder: 201, moderator: 403, admin: 201 },
  'GET /api/instruments/:instrumentId':      { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/instruments/:instrumentId':    { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/instruments/:instrumentId':   { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/instruments/:instrumentId/zero-checks':  { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/instruments/:instrumentId/zero-checks': { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },

  // The spec library: anyone signed in lists it (their own and shared specs); builders add to
  // it. The fixture spec is unshared: its builder and reviewers read it, others get 404; only
  // its builder renames it or adds a version.
  'GET /api/specs':                          { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'POST /api/specs':                         { anonymous: 401, follower: 403, owner: 201, otherBuilder: 201, moderator: 403, admin: 201 },
  'GET /api/specs/:specId':                  { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/specs/:specId':                { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'POST /api/specs/:specId/versions':        { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },

  // Readings and clearances: as for their build. Read by its builder and reviewers; logged and
  // edited by its builder only; removed by its builder or an admin taking content down.
  'GET /api/builds/:buildId/readings':       { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/readings':      { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/builds/:buildId/readings.csv':   { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/readings/import': { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/readings/:readingId':            { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/readings/:readingId':          { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/readings/:readingId':         { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },
  'GET /api/readings/:readingId/history':    { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/builds/:buildId/clearances':     { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/clearances':    { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/clearances/:clearanceId':        { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/clearances/:clearanceId':      { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/clearances/:clearanceId':     { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 204 },

  // Stories while they are being written: read by the build's builder and reviewers, written by
  // its builder only. Deleting is for drafts, by their builder: a draft is not public, so there
  // is nothing for an admin to take down (a public story is taken down by withdrawing it).
  'GET /api/builds/:buildId/stories':        { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/builds/:buildId/stories':       { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/stories/:storyId':               { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'PATCH /api/stories/:storyId':             { anonymous: 401, follower: 403, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  'DELETE /api/stories/:storyId':            { anonymous: 401, follower: 403, owner: 204, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/stories/:storyId/revisions':     { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/stories/:storyId/revisions':    { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  'GET /api/stories/:storyId/revisions/:number': { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/stories/:storyId/claims':        { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'GET /api/stories/:storyId/images':        { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  'POST /api/stories/:storyId/images':       { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },
  // A story's image: an image a current publication shows is public (the visitor is sent the
  // published story's image: 200); the signed-in are sent the draft's image, read as its story.
  'GET /api/story-images/:imageId':          { anonymous: 200, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },

  // Workflow moves: signed in, then the story as for its build (404 to those who may not see
  // it), then shared/review/workflow.ts decides by actor and state. Sending a draft for review
  // is the builder's move; a moderator or admin who may see the draft is refused by role (403).
  'POST /api/stories/:storyId/transitions':  { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 403, admin: 403 },
  // The audit trail is for moderators and admins (its builder sees the checks on the review sheet).
  'GET /api/stories/:storyId/audit':         { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },

  // The moderators' side. The queue and the whole audit log: role moderator.
  'GET /api/review/queue':                   { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'GET /api/review/audit':                   { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  // The review sheet: those who may see the story (its builder reads the flags to answer).
  'GET /api/review/stories/:storyId':        { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  // The flags standing on a build's readings: whoever may see the build (its builder answers them in the workspace).
  'GET /api/review/builds/:buildId/flags':   { anonymous: 401, follower: 404, owner: 200, otherBuilder: 404, moderator: 200, admin: 200 },
  // Taking a story for review, letting it go, and recording a check: role moderator; a check
  // also needs the hold on the story (the fixtures take it with that actor's session). Letting
  // go is for the holder or an admin: the admin's throwaway is held by the moderator.
  'POST /api/review/stories/:storyId/claim':   { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'DELETE /api/review/stories/:storyId/claim': { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 204, admin: 204 },
  'POST /api/review/checks':                 { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 201, admin: 201 },
  // Answering a flag: role builder, and only the builder of the story's build; an admin passes
  // the role check and is refused there (answers are the builder's words), others' ids 404.
  'POST /api/review/checks/:checkId/answers': { anonymous: 401, follower: 403, owner: 201, otherBuilder: 404, moderator: 403, admin: 403 },

  // One-click unsubscribe (RFC 8058): the signed token is the authority, so it is public, needs
  // no session and no CSRF token (sent here without one), and answers the same to everyone.
  'GET /api/unsubscribe':                    { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'POST /api/unsubscribe':                   { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },

  // The public side: what a current publication shows, the same to everyone, signed in or not
  // (moderators and admins read it as the public does). The fixture is a story of the owner's
  // published through review; what is not public answers 404 to all (the block after the table).
  'GET /api/public/stories':                 { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/stories/:storyId':        { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/stories/:storyId/questions': { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/builds/:buildId':         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/builders/:login':         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // The media of the clip the publication cites (the video is asked for whole, without Range: 200).
  'GET /api/public/clips/:clipId/video':     { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/clips/:clipId/poster':    { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/clips/:clipId/frame':     { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/clips/:clipId/captions.vtt': { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // The inspection sheet of a part of the published build, its PDF, and the check of a printed sheet.
  'GET /api/public/parts/:partId/sheet':     { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /sheets/parts/:partId.pdf':           { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/public/verify/parts/:partId':    { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // Atom feeds of the whole site and of the owner.
  'GET /feeds/stories.atom':                 { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /feeds/builders/:login.atom':         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // For search engines: the public pages and what crawlers may visit, the same to everyone.
  'GET /sitemap.xml':                        { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /robots.txt':                         { anonymous: 200, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },

  // A reader's own things: anyone signed in, about themselves only.
  'GET /api/public/stories/following':       { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/me/follows':                     { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'GET /api/me/preferences':                 { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  'PATCH /api/me/preferences':               { anonymous: 401, follower: 200, owner: 200, otherBuilder: 200, moderator: 200, admin: 200 },
  // Following the owner: anyone signed in but the owner, who cannot follow themselves (400
  // cannot_follow_self). Unfollowing is harmless when not following, so it is 204 to all.
  'POST /api/builders/:builderId/follow':    { anonymous: 401, follower: 201, owner: 400, otherBuilder: 201, moderator: 201, admin: 201 },
  'DELETE /api/builders/:builderId/follow':  { anonymous: 401, follower: 204, owner: 204, otherBuilder: 204, moderator: 204, admin: 204 },
  // Mail about a builder one follows; the owner follows nobody here, so there is no follow to change.
  'PATCH /api/me/follows/:builderId':        { anonymous: 401, follower: 200, owner: 404, otherBuilder: 200, moderator: 200, admin: 200 },

  // Questions on the published story: anyone signed in asks (five per account in ten minutes;
  // one each here). Only the story's builder answers: others signed in see the question but may
  // not answer it (403). Hiding and showing again: role moderator (admins pass every role check).
  'POST /api/public/stories/:storyId/questions': { anonymous: 401, follower: 201, owner: 201, otherBuilder: 201, moderator: 201, admin: 201 },
  'POST /api/questions/:questionId/answer':  { anonymous: 401, follower: 403, owner: 200, otherBuilder: 403, moderator: 403, admin: 403 },
  'POST /api/questions/:questionId/hide':    { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
  'POST /api/questions/:questionId/unhide':  { anonymous: 401, follower: 403, owner: 403, otherBuilder: 403, moderator: 200, admin: 200 },
};

/** A request the public calculator answers (end float, from tests/server/calc/calc.api.test.ts). */
const calcRequest = {
  readings: {
    boreDepth: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 },
    componentHeight: { kind: 'direct', value: 0.5595, unit: 'in', resolution: 0.0001 },
  },
  terms: [
    { reading: 'boreDepth', sign: 1 },
    { reading: 'componentHeight', sign: -1 },
  ],
  spec: { min: 0.003, max: 0.005, unit: 'in' },
};

let t: TestApp;
let work: string;
let clipFile: string;
let pngFile: string;
let fx: MatrixFixtures;
const sessions = {} as Record<Actor, Session>;

/**
 * What each route is sent, so a refusal is about who asks and never about a malformed request:
 * valid bodies, queries and files. Routes not named here are sent without a body.
 */
interface Shape {
  query?: () => string;
  /** The body; may differ per actor (its throwaway) and may read the current lock version first. */
  body?: (actor: Actor) => unknown;
  /** Sent as an HTML form (application/x-www-form-urlencoded) instead of JSON. */
  form?: Record<string, string>;
  /** A multipart upload in the field `file`. */
  attach?: () => { file: string; name: string };
  /** Path parameters that differ per actor (throwaway fixtures for destructive routes) or per route. */
  params?: (actor: Actor) => Partial<Record<string, number | string>>;
  /**
   * Puts the actor's own state where the row starts from (following the owner or not) before
   * the request, so a cell does not depend on which rows ran before it.
   */
  before?: (actor: Actor) => Promise<void>;
  /** Sent from a new session of the actor, because the request ends the session. */
  ownSession?: boolean;
  /** Sent without the CSRF header, because the route is exempt (a signed token is its authority). */
  noCsrf?: boolean;
  /** Request headers (the tus protocol's); may read the current state first. */
  headers?: (actor: Actor) => Record<string, string> | Promise<Record<string, string>>;
}

/** The resource's lock version now, as its builder sees it (a PATCH sends the version it started from). */
async function lockVersionAt(url: string, field: string): Promise<number> {
  const res = await sessions.owner.agent.get(url).expect(200);
  return res.body[field].lockVersion as number;
}

const clip = () => ({ file: clipFile, name: 'matrix-upload.mp4' });

/**
 * The proposal the dismiss rows name: "three thou" heard at 1 s in the fixture clip (its words
 * are stored directly once the worker has listened to the clip's tone).
 */
const MATRIX_PROPOSAL_ID = '1000-0';
const dismissalOfMatrixProposal = () => ProposalDismissal.findOne({ where: { clipId: fx.clipId, proposalId: MATRIX_PROPOSAL_ID } });
async function setMatrixProposalDismissed(dismissed: boolean) {
  if (!dismissed) await ProposalDismissal.destroy({ where: { clipId: fx.clipId, proposalId: MATRIX_PROPOSAL_ID } });
  else await ProposalDismissal.bulkCreate([{ clipId: fx.clipId, proposalId: MATRIX_PROPOSAL_ID, dismissedBy: fx.actorIds.owner }], { ignoreDuplicates: true });
}

/** Where the display region rows put a display: the right half of the frame, in the middle. */
const MATRIX_REGION = { x: 0.5, y: 0.25, width: 0.4, height: 0.5 };
async function setMatrixDisplayRegion(present: boolean) {
  await DisplayRegionRow.destroy({ where: { clipId: fx.clipId } });
  if (present) await DisplayRegionRow.create({ clipId: fx.clipId, ...MATRIX_REGION, unit: 'in', state: 'ready', setBy: fx.actorIds.owner });
}

/**
 * The caption correction rows' span: before the words the dismiss rows need (1–1.5 s), so a
 * correction there never changes their proposal. Each row starts with none, or with one to remove.
 */
const MATRIX_CORRECTION = { startMs: 100, endMs: 400, text: 'matrix check words' };
const matrixCorrection = { id: 0 };
const matrixCorrections = () => CaptionCorrection.findAll({ where: { clipId: fx.clipId } });
async function setMatrixCorrection(present: boolean) {
  await CaptionCorrection.destroy({ where: { clipId: fx.clipId } });
  if (present) matrixCorrection.id = (await CaptionCorrection.create({ clipId: fx.clipId, ...MATRIX_CORRECTION, correctedBy: fx.actorIds.owner })).id;
}

/** Waits until the worker is done with the fixture clip's sound, then gives it the words the dismiss rows need. */
async function giveFixtureClipWords() {
  const end = Date.now() + 60_000;
  for (;;) {
    // Asking for the words queues a clip nobody has listened to yet.
    await sessions.owner.agent.get(`/api/clips/${fx.clipId}/transcript`).expect(200);
    const state = (await listeningOf(fx.clipId))?.state;
    if (state === 'ready' || state === 'failed' || state === 'unavailable') break;
    if (Date.now() > end) throw new Error(`the fixture clip is still ${state} after a minute`);
    await new Promise((r) => setTimeout(r, 250));
  }
  await storeClipWords(fx.clipId, [
    { word: 'three', startMs: 1000, endMs: 1200, confidence: 0.9 },
    { word: 'thou', startMs: 1250, endMs: 1500, confidence: 0.9 },
  ]);
}

/** The owner's resumable upload every actor asks about and continues, and one per actor to cancel. */
const uploads = { url: '', id: '', toCancel: {} as Record<Actor, string>, offsetBefore: 0 };
const tusHeaders = { 'Tus-Resumable': '1.0.0' };
/** Where the fixture upload stands now, as its builder sees it. */
async function uploadOffset(): Promise<number> {
  const res = await headUpload(sessions.owner.agent, uploads.url).expect(200);
  return Number(res.headers['upload-offset']);
}
const png = () => ({ file: pngFile, name: 'matrix.png' });
const token = () => `?token=${encodeURIComponent(fx.unsubscribeToken)}`;
const publishedStory = () => ({ storyId: fx.published.storyId });
const publishedClip = () => ({ clipId: fx.published.clipId });
const askedBy = (actor: Actor) => `Matrix question from ${actor}: was the bore depth taken at room temperature?`;
const answeredBy = (actor: Actor) => `Matrix answer from ${actor}: yes, after an hour on the plate.`;

/** The account id of a signed-in actor; null for the visitor, who has none. */
const idOf = (actor: Actor): number | null => (actor === 'anonymous' ? null : fx.actorIds[actor]);

/** The actor's follow of the owner, or null. */
async function followOfOwner(actor: Actor): Promise<Follow | null> {
  const id = idOf(actor);
  return id === null ? null : Follow.findOne({ where: { followerId: id, builderId: fx.actorIds.owner } });
}

/**
 * Makes the actor follow the owner (mail on) or not, on the row itself: the routes under test
 * are not used to set up their own precondition. The visitor has no account, and the owner
 * cannot follow themselves, so both are left as they are.
 */
async function setFollowingOwner(actor: Actor, following: boolean): Promise<void> {
  const id = idOf(actor);
  if (id === null || actor === 'owner') return;
  const where = { followerId: id, builderId: fx.actorIds.owner };
  if (!following) {
    await Follow.destroy({ where });
    return;
  }
  const [row] = await Follow.findOrCreate({ where, defaults: where });
  if (!row.emailOnPublish) await row.update({ emailOnPublish: true });
}

const SHAPES: Record<string, Shape> = {
  'POST /auth/sign-out': { ownSession: true },
  'POST /api/calc': { body: () => calcRequest },
  'PATCH /api/admin/users/:id': { body: () => ({ role: 'follower' }) },
  'POST /api/builds': { body: () => ({ title: 'Matrix new build', parts: [{ name: 'Matrix crank' }] }) },
  'PATCH /api/builds/:buildId': { body: () => ({ title: 'Matrix check title' }) },
  'POST /api/builds/:buildId/clips': { attach: clip },
  'POST /api/builds/:buildId/uploads': {
    headers: () => ({ ...tusHeaders, 'Upload-Length': '1000', 'Upload-Metadata': `filename ${Buffer.from('matrix-resumable.mp4').toString('base64')}` }),
  },
  'HEAD /api/builds/:buildId/uploads/:uploadId': { headers: () => tusHeaders },
  'PATCH /api/builds/:buildId/uploads/:uploadId': {
    before: async () => {
      uploads.offsetBefore = await uploadOffset();
    },
    headers: () => ({ ...tusHeaders, 'Upload-Offset': String(uploads.offsetBefore), 'Content-Type': 'application/offset+octet-stream' }),
    // One byte, so a success moves the offset and a refusal visibly does not.
    body: () => Buffer.from('m'),
  },
  'DELETE /api/builds/:buildId/uploads/:uploadId': { headers: () => tusHeaders, params: (actor) => ({ uploadId: uploads.toCancel[actor] }) },
  'PATCH /api/clips/:clipId': { body: () => ({ title: 'x' }) },
  'DELETE /api/clips/:clipId': { params: (actor) => ({ clipId: fx.clipToDelete[actor] }) },
  'GET /api/clips/:clipId/frame': { query: () => '?t=0.5' },
  'POST /api/clips/:clipId/moments': { body: () => ({ atMs: 100 }) },
  'POST /api/clips/:clipId/suggestions/:id/dismiss': { before: () => setMatrixProposalDismissed(false), params: () => ({ id: MATRIX_PROPOSAL_ID }) },
  'DELETE /api/clips/:clipId/suggestions/:id/dismiss': { before: () => setMatrixProposalDismissed(true), params: () => ({ id: MATRIX_PROPOSAL_ID }) },
  'PUT /api/clips/:clipId/display-region': { before: () => setMatrixDisplayRegion(false), body: () => MATRIX_REGION },
  'DELETE /api/clips/:clipId/display-region': { before: () => setMatrixDisplayRegion(true) },
  'GET /api/clips/:clipId/caption-corrections': { before: () => setMatrixCorrection(true) },
  'POST /api/clips/:clipId/caption-corrections': { before: () => setMatrixCorrection(false), body: () => MATRIX_CORRECTION },
  'DELETE /api/clips/:clipId/caption-corrections/:correctionId': {
    before: () => setMatrixCorrection(true),
    params: () => ({ correctionId: matrixCorrection.id }),
  },
  'PATCH /api/moments/:momentId': { body: () => ({ label: 'Matrix check label' }) },
  'DELETE /api/moments/:momentId': { params: (actor) => ({ momentId: fx.momentToDelete[actor] }) },

  'POST /api/instruments': { body: () => ({ name: 'Matrix new feeler set', kind: 'feeler-blades', unit: 'in', resolution: '0.001' }) },
  'PATCH /api/instruments/:instrumentId': {
    body: async () => ({ note: 'Matrix check note', lockVersion: await lockVersionAt(`/api/instruments/${fx.instrumentId}`, 'instrument') }),
  },
  'DELETE /api/instruments/:instrumentId': { params: (actor) => ({ instrumentId: fx.instrumentToDelete[actor] }) },
  'POST /api/instruments/:instrumentId/zero-checks': { body: () => ({ checkedOn: '2026-12-01', standardSize: '0', shown: '0.0001' }) },

  'POST /api/specs': {
    body: () => ({ name: 'Matrix new spec', unit: 'in', min: '0.002', max: '0.004', source: { kind: 'manual', text: 'Matrix manual (invented), p. 1' } }),
  },
  'PATCH /api/specs/:specId': {
    body: async () => ({ appliesTo: 'Invented rotor oil pump, matrix check', lockVersion: await lockVersionAt(`/api/specs/${fx.specId}`, 'spec') }),
  },
  'POST /api/specs/:specId/versions': {
    body: () => ({ unit: 'in', min: '0.002', max: '0.004', source: { kind: 'manual', text: 'Matrix manual (invented), p. 1' } }),
  },

  'POST /api/builds/:buildId/readings': {
    body: () => ({ momentId: fx.momentId, instrumentId: fx.instrumentId, partId: fx.partId, kind: 'direct', name: 'Matrix new bore depth', value: '0.5643', takenOn: '2026-11-20' }),
  },
  // A preview only (store: false): one row the owner's register and clip can take.
  'POST /api/builds/:buildId/readings/import': {
    // The clip by its title as it stands now (earlier rows rename it and add clips to the build).
    body: async () => ({
      csv: `name,kind,value,instrument,clip,at_s,taken_on\r\nMatrix imported depth,direct,0.5644,Matrix depth micrometer 0–6 in,"${(await Clip.findByPk(fx.clipId))!.title}",0.5,2026-11-20\r\n`,
      store: false,
    }),
  },
  'PATCH /api/readings/:readingId': {
    body: async () => ({ note: 'Matrix check note', lockVersion: await lockVersionAt(`/api/readings/${fx.readingId}`, 'reading') }),
  },
  'DELETE /api/readings/:readingId': { params: (actor) => ({ readingId: fx.readingToDelete[actor] }) },
  'POST /api/builds/:buildId/clearances': {
    body: () => ({
      name: 'Matrix new end float',
      terms: [
        { readingId: fx.readingId, sign: 1 },
        { readingId: fx.heightReadingId, sign: -1 },
      ],
    }),
  },
  'PATCH /api/clearances/:clearanceId': {
    body: async () => ({ note: 'Matrix check note', lockVersion: await lockVersionAt(`/api/clearances/${fx.clearanceId}`, 'clearance') }),
  },
  'DELETE /api/clearances/:clearanceId': { params: (actor) => ({ clearanceId: fx.clearanceToDelete[actor] }) },

  'POST /api/builds/:buildId/stories': { body: () => ({ title: 'Matrix new entry' }) },
  'PATCH /api/stories/:storyId': {
    body: async () => ({ summary: 'Matrix check summary', lockVersion: await storyLockVersion(sessions.owner, fx.storyId) }),
  },
  'DELETE /api/stories/:storyId': { params: (actor) => ({ storyId: fx.storyToDelete[actor] }) },
  'POST /api/stories/:storyId/images': { attach: png },
  'GET /api/story-images/:imageId': { params: (actor) => (actor === 'anonymous' ? { imageId: fx.published.imageId } : {}) },
  'POST /api/stories/:storyId/transitions': {
    params: (actor) => ({ storyId: fx.storyToSubmit[actor] }),
    body: async (actor) => ({ action: 'submit', lockVersion: await storyLockVersion(sessions.owner, fx.storyToSubmit[actor]) }),
  },

  'POST /api/review/stories/:storyId/claim': { params: (actor) => ({ storyId: fx.storyToClaim[actor] }) },
  'DELETE /api/review/stories/:storyId/claim': { params: (actor) => ({ storyId: fx.storyToRelease[actor] }) },
  'POST /api/review/checks': { body: (actor) => ({ storyId: fx.storyToCheck[actor], subjectType: 'reading', subjectId: fx.readingId, state: 'checked' }) },
  'POST /api/review/checks/:checkId/answers': { body: () => ({ body: 'Matrix answer: the reading was taken again with the thimble in view.' }) },

  'GET /api/unsubscribe': { query: token },
  'POST /api/unsubscribe': { query: token, form: { 'List-Unsubscribe': 'One-Click' }, noCsrf: true },

  'GET /api/public/stories/:storyId': { params: publishedStory },
  'GET /api/public/stories/:storyId/questions': { params: publishedStory },
  'GET /api/public/builds/:buildId': { params: () => ({ buildId: fx.published.buildId }) },
  'GET /api/public/clips/:clipId/video': { params: publishedClip },
  'GET /api/public/clips/:clipId/poster': { params: publishedClip },
  'GET /api/public/clips/:clipId/frame': { params: publishedClip, query: () => '?t=0.5' },
  'GET /api/public/clips/:clipId/captions.vtt': { params: publishedClip },
  'GET /api/public/verify/parts/:partId': { query: () => `?story=${fx.published.storyId}&rev=${fx.published.revision}` },

  'GET /api/public/stories/following': { before: (actor) => setFollowingOwner(actor, true) },
  'GET /api/me/follows': { before: (actor) => setFollowingOwner(actor, true) },
  'PATCH /api/me/preferences': { body: () => ({ weeklyDigest: true }) },
  'POST /api/builders/:builderId/follow': { before: (actor) => setFollowingOwner(actor, false) },
  'DELETE /api/builders/:builderId/follow': { before: (actor) => setFollowingOwner(actor, true) },
  'PATCH /api/me/follows/:builderId': { before: (actor) => setFollowingOwner(actor, true), body: () => ({ emailOnPublish: false }) },

  'POST /api/public/stories/:storyId/questions': { params: publishedStory, body: (actor) => ({ body: askedBy(actor) }) },
  'POST /api/questions/:questionId/answer': { body: (actor) => ({ body: answeredBy(actor) }) },
  'POST /api/questions/:questionId/hide': {
    params: (actor) => ({ questionId: fx.published.questionToHide[actor] }),
    body: () => ({ reason: 'Off the subject of this entry (matrix check).' }),
  },
  'POST /api/questions/:questionId/unhide': { params: (actor) => ({ questionId: fx.published.questionToUnhide[actor] }) },
};

/** The clip ids of the fixture build as they are now (uploads in the matrix add some), for PUT order. */
async function currentClipIds(): Promise<number[]> {
  const res = await sessions.owner.agent.get(`/api/builds/${fx.buildId}/clips`).expect(200);
  return (res.body.items as { id: number }[]).map((c) => c.id);
}

/** Fills every `:param` of a route path; an unknown parameter fails loudly, so a new one needs a fixture. */
function fill(routePath: string, actor: Actor, shape: Shape): string {
  const params: Record<string, number | string | undefined> = {
    buildId: fx.buildId,
    clipId: fx.clipId,
    momentId: fx.momentId,
    id: fx.userId,
    instrumentId: fx.instrumentId,
    specId: fx.specId,
    readingId: fx.readingId,
    clearanceId: fx.clearanceId,
    storyId: fx.storyId,
    number: fx.revisionNumber,
    imageId: fx.imageId,
    checkId: fx.checkId,
    // The public side: the owner as a builder, and the published build's part and question.
    builderId: fx.actorIds.owner,
    login: fx.published.ownerLogin,
    partId: fx.published.partId,
    questionId: fx.published.questionId,
    uploadId: uploads.id,
    ...shape.params?.(actor),
  };
  return routePath.replace(/:(\w+)/g, (_, name: string) => {
    const value = params[name];
    if (value === undefined) throw new Error(`no fixture for :${name} in ${routePath}; add one to the matrix fixtures`);
    return String(value);
  });
}

async function send(routeKey: string, actor: Actor) {
  const [method, routePath] = routeKey.split(' ') as [string, string];
  const shape = SHAPES[routeKey] ?? {};
  const s = shape.ownSession ? await sessionFor(t, actor) : sessions[actor];
  await shape.before?.(actor);
  const url = fill(routePath, actor, shape) + (shape.query?.() ?? '');
  const verb = method.toLowerCase() as 'get' | 'head' | 'post' | 'put' | 'patch' | 'delete';
  // Worked out before the request starts, so reading the current lock version is not part of it.
  const body = routeKey === 'PUT /api/builds/:buildId/clips/order' ? { clipIds: await currentClipIds() } : await shape.body?.(actor);
  let req = s.agent[verb](url);
  if (verb !== 'get' && verb !== 'head' && !shape.noCsrf) req = req.set('x-csrf-token', s.token);
  if (shape.headers) req = req.set(await shape.headers(actor));
  if (shape.attach) {
    const { file, name } = shape.attach();
    return { s, res: await req.attach('file', file, name) };
  }
  if (shape.form) return { s, res: await req.type('form').send(shape.form) };
  return { s, res: await (body === undefined ? req : req.send(body as object)) };
}

/** The review sheet of a story as the moderator sees it: its hold and its checks. */
async function sheet(storyId: number): Promise<{ claim: { moderatorId: number } | null; checks: { id: number; moderatorId: number; answers: { authorId: number }[] }[] }> {
  const res = await sessions.moderator.agent.get(`/api/review/stories/${storyId}`).expect(200);
  return res.body;
}

/** The owner's GET of `url` answers 200 while the thing exists and 404 once it is gone. */
async function stillThere(url: string, gone: boolean) {
  await sessions.owner.agent.get(url).expect(gone ? 404 : 200);
}

let answersSoFar = 0;

/**
 * What each state-changing row must have done, checked after every cell: a refusal changed
 * nothing; a success really did the one thing asked, to the actor's own throwaway.
 */
const EFFECTS: Record<string, (actor: Actor, status: number, s: Session, res: { headers: Record<string, string>; body: unknown }) => Promise<void>> = {
  // Resumable uploads: a created upload is the owner's and is at the address given; nobody else
  // starts one on the build; a PATCH moved the offset by its one byte or not at all; a cancelled
  // upload is gone, a refused cancel leaves it.
  'POST /api/builds/:buildId/uploads': async (actor, status, _s, res) => {
    if (status === 201) {
      const row = await ClipUpload.findByPk(res.headers.location!.split('/').pop()!);
      expect({ build: row?.buildId, owner: row?.ownerId }).toEqual({ build: fx.buildId, owner: fx.actorIds.owner });
    } else if (idOf(actor) !== null) {
      expect(await ClipUpload.count({ where: { buildId: fx.buildId, ownerId: idOf(actor)! } })).toBe(0);
    }
  },
  'HEAD /api/builds/:buildId/uploads/:uploadId': async (_actor, status, _s, res) => {
    if (status === 200) expect(res.headers['upload-length']).toBe('1000');
    else expect(res.headers['upload-offset']).toBeUndefined();
  },
  'PATCH /api/builds/:buildId/uploads/:uploadId': async (_actor, status) => {
    expect(await uploadOffset()).toBe(uploads.offsetBefore + (status === 204 ? 1 : 0));
  },
  'DELETE /api/builds/:buildId/uploads/:uploadId': async (actor, status) => {
    await headUpload(sessions.owner.agent, `/api/builds/${fx.buildId}/uploads/${uploads.toCancel[actor]}`).expect(status === 204 ? 404 : 200);
  },
  'DELETE /api/clips/:clipId': (actor, status) => stillThere(`/api/clips/${fx.clipToDelete[actor]}`, status === 204),
  // A dismissal is there after the builder's POST and gone after their DELETE; a refusal left it as it was.
  'POST /api/clips/:clipId/suggestions/:id/dismiss': async (_actor, status) => {
    const row = await dismissalOfMatrixProposal();
    if (status === 204) expect(row?.dismissedBy).toBe(fx.actorIds.owner);
    else expect(row).toBeNull();
  },
  'DELETE /api/clips/:clipId/suggestions/:id/dismiss': async (_actor, status) => {
    expect(await dismissalOfMatrixProposal()).toEqual(status === 204 ? null : expect.anything());
  },
  // The region is set by the builder's PUT (and its reading queued) and gone after their DELETE; a refusal left it as it was.
  'PUT /api/clips/:clipId/display-region': async (_actor, status) => {
    const row = await DisplayRegionRow.findByPk(fx.clipId);
    if (status === 204) expect(row).toMatchObject({ ...MATRIX_REGION, setBy: fx.actorIds.owner });
    else expect(row).toBeNull();
  },
  'DELETE /api/clips/:clipId/display-region': async (_actor, status) => {
    expect(await DisplayRegionRow.findByPk(fx.clipId)).toEqual(status === 204 ? null : expect.anything());
  },
  // Those who may see the clip are given its correction; a correction is made only by the
  // builder's POST (in their name) and gone only after their DELETE; a refusal changed nothing.
  // Each cell leaves the fixture clip without corrections.
  'GET /api/clips/:clipId/caption-corrections': async (_actor, status, _s, res) => {
    if (status === 200) expect((res.body as { items: unknown[] }).items).toEqual([expect.objectContaining({ id: matrixCorrection.id, ...MATRIX_CORRECTION })]);
    else expect((res.body as { items?: unknown }).items).toBeUndefined();
    await setMatrixCorrection(false);
  },
  'POST /api/clips/:clipId/caption-corrections': async (_actor, status) => {
    const rows = await matrixCorrections();
    if (status === 201) expect(rows.map((r) => ({ text: r.text, by: r.correctedBy }))).toEqual([{ text: MATRIX_CORRECTION.text, by: fx.actorIds.owner }]);
    else expect(rows).toEqual([]);
    await setMatrixCorrection(false);
  },
  'DELETE /api/clips/:clipId/caption-corrections/:correctionId': async (_actor, status) => {
    expect((await matrixCorrections()).map((r) => r.id)).toEqual(status === 204 ? [] : [matrixCorrection.id]);
    await setMatrixCorrection(false);
  },
  'DELETE /api/moments/:momentId': async (actor, status) => {
    const list = await sessions.owner.agent.get(`/api/clips/${fx.clipId}/moments`).expect(200);
    const ids = (list.body.items as { id: number }[]).map((m) => m.id);
    if (status === 204) expect(ids).not.toContain(fx.momentToDelete[actor]);
    else expect(ids).toContain(fx.momentToDelete[actor]);
  },
  'DELETE /api/instruments/:instrumentId': (actor, status) => stillThere(`/api/instruments/${fx.instrumentToDelete[actor]}`, status === 204),
  // The import row previews: the owner is shown the one new row, and nobody's request stores it.
  'POST /api/builds/:buildId/readings/import': async (_actor, status, _s, res) => {
    if (status === 200) {
      expect(res.body).toMatchObject({ rows: [{ line: 2, status: 'new', problems: [] }], counts: { new: 1, unchanged: 0, refused: 0 }, stored: false });
    } else {
      expect((res.body as { rows?: unknown }).rows).toBeUndefined();
    }
    expect(await Reading.count({ where: { buildId: fx.buildId, name: 'Matrix imported depth' } })).toBe(0);
  },
  'DELETE /api/readings/:readingId': (actor, status) => stillThere(`/api/readings/${fx.readingToDelete[actor]}`, status === 204),
  'DELETE /api/clearances/:clearanceId': (actor, status) => stillThere(`/api/clearances/${fx.clearanceToDelete[actor]}`, status === 204),
  'DELETE /api/stories/:storyId': (actor, status) => stillThere(`/api/stories/${fx.storyToDelete[actor]}`, status === 204),
  'POST /api/stories/:storyId/transitions': async (actor, status) => {
    const res = await sessions.owner.agent.get(`/api/stories/${fx.storyToSubmit[actor]}`).expect(200);
    expect(res.body.story.state).toBe(status === 200 ? 'in-review' : 'draft');
  },
  'POST /api/review/stories/:storyId/claim': async (actor, status) => {
    const { claim } = await sheet(fx.storyToClaim[actor]);
    if (status === 200) expect(claim?.moderatorId).toBe(fx.actorIds[actor as Exclude<Actor, 'anonymous'>]);
    else expect(claim).toBeNull();
  },
  'DELETE /api/review/stories/:storyId/claim': async (actor, status) => {
    const { claim } = await sheet(fx.storyToRelease[actor]);
    if (status === 204) expect(claim).toBeNull();
    else expect(claim?.moderatorId).toBe(fx.actorIds.moderator);
  },
  'POST /api/review/checks': async (actor, status) => {
    const { checks } = await sheet(fx.storyToCheck[actor]);
    if (status === 201) expect(checks.map((c) => c.moderatorId)).toEqual([fx.actorIds[actor as Exclude<Actor, 'anonymous'>]]);
    else expect(checks).toEqual([]);
  },
  'POST /api/review/checks/:checkId/answers': async (_actor, status) => {
    if (status === 201) answersSoFar += 1;
    const { checks } = await sheet(fx.flaggedStoryId);
    const answers = checks.find((c) => c.id === fx.checkId)?.answers ?? [];
    expect(answers).toHaveLength(answersSoFar);
    expect(answers.every((a) => a.authorId === fx.actorIds.owner)).toBe(true);
  },
  // GET only describes (mail scanners follow links); POST turns the mail off, and again is harmless.
  'GET /api/unsubscribe': async (_actor, _status, _s, res) => {
    expect((res.body as { subscribed: boolean }).subscribed).toBe(true);
    expect((await Follow.findOne({ where: { followerId: fx.userId, builderId: fx.actorIds.owner } }))?.emailOnPublish).toBe(true);
  },
  'POST /api/unsubscribe': async (_actor, _status, _s, res) => {
    expect((res.body as { subscribed: boolean }).subscribed).toBe(false);
    expect((await Follow.findOne({ where: { followerId: fx.userId, builderId: fx.actorIds.owner } }))?.emailOnPublish).toBe(false);
  },
  // Without a code from the provider both OAuth routes start the round trip at its authorize
  // endpoint, and neither signs anyone in or out.
  'GET /auth/github': (actor, _status, s, res) => oauthStarts(actor, s, res.headers),
  'GET /auth/github/callback': (actor, _status, s, res) => oauthStarts(actor, s, res.headers),
  // Sign-out ends the session it was sent from (a throwaway one), whoever sent it.
  'POST /auth/sign-out': async (_actor, _status, s) => {
    await s.agent.get('/api/me').expect(401);
  },

  // Following: each signed-in actor's own follow of the owner (the visitor has none to look at).
  'POST /api/builders/:builderId/follow': async (actor, status, _s, res) => {
    if (actor === 'anonymous') return;
    const row = await followOfOwner(actor);
    if (status === 201) {
      expect(row?.emailOnPublish).toBe(true);
    } else {
      expect((res.body as { error: { code: string } }).error.code).toBe('cannot_follow_self');
      expect(await Follow.findOne({ where: { followerId: fx.actorIds.owner, builderId: fx.actorIds.owner } })).toBeNull();
    }
  },
  'DELETE /api/builders/:builderId/follow': async (actor) => {
    if (actor !== 'anonymous') expect(await followOfOwner(actor)).toBeNull();
  },
  'PATCH /api/me/follows/:builderId': async (actor, status, _s, res) => {
    if (actor === 'anonymous') return;
    const row = await followOfOwner(actor);
    if (status === 200) {
      expect(row?.emailOnPublish).toBe(false);
      expect((res.body as { follow: { emailOnPublish: boolean } }).follow.emailOnPublish).toBe(false);
    } else {
      expect(row).toBeNull();
    }
  },
  // The lists are the caller's own: those who follow the owner see the owner and the published story.
  'GET /api/me/follows': async (actor, status, _s, res) => {
    if (status !== 200) return;
    const ids = (res.body as { items: { builder: { id: number } }[] }).items.map((i) => i.builder.id);
    if (actor === 'owner') expect(ids).not.toContain(fx.actorIds.owner);
    else expect(ids).toContain(fx.actorIds.owner);
  },
  'GET /api/public/stories/following': async (actor, status, _s, res) => {
    if (status !== 200) return;
    const ids = (res.body as { items: { storyId: number }[] }).items.map((i) => i.storyId);
    if (actor === 'owner') expect(ids).not.toContain(fx.published.storyId);
    else expect(ids).toContain(fx.published.storyId);
  },
  'PATCH /api/me/preferences': async (_actor, status, s) => {
    if (status !== 200) return;
    expect((await s.agent.get('/api/me/preferences').expect(200)).body.preferences.weeklyDigest).toBe(true);
  },

  // Questions: a success did the one thing asked; a refusal left the question as it was.
  'POST /api/public/stories/:storyId/questions': async (actor, status) => {
    const mine = await Question.findAll({ where: { storyId: fx.published.storyId, body: askedBy(actor) } });
    if (status === 201) expect(mine.map((q) => q.authorId)).toEqual([idOf(actor)]);
    else expect(mine).toEqual([]);
  },
  'POST /api/questions/:questionId/answer': async (actor, status) => {
    const q = (await Question.findByPk(fx.published.questionId))!;
    if (status === 200) expect({ body: q.answerBody, by: q.answeredBy }).toEqual({ body: answeredBy(actor), by: fx.actorIds.owner });
    else expect(q.answerBody).not.toBe(answeredBy(actor));
  },
  'POST /api/questions/:questionId/hide': async (actor, status) => {
    const q = (await Question.findByPk(fx.published.questionToHide[actor]))!;
    if (status === 200) expect({ hidden: q.hiddenAt !== null, by: q.hiddenBy }).toEqual({ hidden: true, by: idOf(actor) });
    else expect(q.hiddenAt).toBeNull();
  },
  'POST /api/questions/:questionId/unhide': async (actor, status) => {
    const q = (await Question.findByPk(fx.published.questionToUnhide[actor]))!;
    if (status === 200) expect(q.hiddenAt).toBeNull();
    else expect(q.hiddenAt).not.toBeNull();
  },
};

async function oauthStarts(actor: Actor, s: Session, headers: Record<string, string>) {
  expect(new URL(headers.location!).pathname).toBe('/login/oauth/authorize');
  await s.agent.get('/api/me').expect(actor === 'anonymous' ? 401 : 200);
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-authz-matrix-'));
  [clipFile, pngFile] = await Promise.all([makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work }), makeTestPng(work)]);
  t = await startTestApp({}, { jobs: true });
  const opened = await Promise.all(actors.map((actor) => sessionFor(t, actor)));
  actors.forEach((actor, i) => (sessions[actor] = opened[i]!));
  fx = await buildMatrixFixtures(t, sessions, { clip: clipFile, image: pngFile });
  await giveFixtureClipWords();
  const startUpload = async () => {
    const res = await createUpload(sessions.owner.agent, sessions.owner.token, fx.buildId, 1000, 'matrix-resumable.mp4').expect(201);
    return res.headers.location!.split('/').pop()!;
  };
  uploads.id = await startUpload();
  uploads.url = `/api/builds/${fx.buildId}/uploads/${uploads.id}`;
  for (const actor of actors) uploads.toCancel[actor] = await startUpload();
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the matrix covers exactly the routes the app mounts (ASVS 5.0.0 V8.1.1)', () => {
  const listed = () => [...new Set(listRoutes(t.app).map((r) => `${r.method} ${r.path}`))].sort();

  it('every mounted route has a row in the table, so a new route forces a decision', () => {
    const missing = listed().filter((key) => !(key in TABLE));
    expect(missing, 'routes mounted but missing from TABLE').toEqual([]);
  });

  it('every row of the table is a route the app still mounts', () => {
    const mounted = new Set(listed());
    const stale = Object.keys(TABLE).filter((key) => !mounted.has(key));
    expect(stale, 'rows in TABLE for routes that are no longer mounted').toEqual([]);
  });

  it('request shapes and effect checks name only rows of the table', () => {
    expect(Object.keys(SHAPES).filter((key) => !(key in TABLE))).toEqual([]);
    expect(Object.keys(EFFECTS).filter((key) => !(key in TABLE))).toEqual([]);
  });
});

// ASVS 5.0.0 V8.2.1 (function level) and V8.2.2 (data specific, IDOR/BOLA), one test per cell.
describe.each(Object.entries(TABLE))('%s', (routeKey, expected) => {
  it.each(actors.map((actor) => [actor, expected[actor]] as const))('%s → %i', async (actor, status) => {
    const { s, res } = await send(routeKey, actor);
    expect(res.status, `${routeKey} as ${actor}: ${JSON.stringify(res.body ?? '').slice(0, 300)}`).toBe(status);

    // A HEAD answer has no body to read the code from.
    if ((status === 401 || status === 403 || status === 404) && !routeKey.startsWith('HEAD ')) {
      // A refusal is our error body, and carries no resource data.
      expect(res.body?.error?.code).toBe({ 401: 'unauthorized', 403: 'forbidden', 404: 'not_found' }[status]);
    }
    await EFFECTS[routeKey]?.(actor, status, s, res);
  });
});

/*
 * The public reads for stories that are not public: a draft of the owner's, and a story that was
 * published and then withdrawn, each in a build with nothing else public. Nobody, the owner and
 * the reviewers included, reads them through the public side (they have the builder's and the
 * review routes for that): 404, the same answer as for an unknown id (ASVS 5.0.0 V8.2.2).
 */
describe.each(['draft', 'withdrawn'] as const)('a %s story on the public side', (which) => {
  const scope = () => fx.published.notPublic[which];
  const notFoundReads = () => {
    const x = scope();
    return [
      `/api/public/stories/${x.storyId}`,
      `/api/public/stories/${x.storyId}/questions`,
      `/api/public/clips/${x.clipId}/video`,
      `/api/public/clips/${x.clipId}/poster`,
      `/api/public/clips/${x.clipId}/frame?t=0.5`,
      `/api/public/builds/${x.buildId}`,
      `/api/public/parts/${x.partId}/sheet`,
      `/sheets/parts/${x.partId}.pdf`,
      // The published build's part, narrowed to this story: nothing public of it either.
      `/api/public/parts/${fx.published.partId}/sheet?story=${x.storyId}`,
    ];
  };

  it.each(actors)('%s: its story, questions, clip media, build and part sheet are not found', async (actor) => {
    for (const url of notFoundReads()) {
      const res = await sessions[actor].agent.get(url);
      expect(res.status, `GET ${url} as ${actor}: ${JSON.stringify(res.body ?? '').slice(0, 300)}`).toBe(404);
      expect(res.body?.error?.code, url).toBe('not_found');
    }
  });

  // A printed sheet is checked against the database (its QR code), so the answer for an entry
  // no longer public is "not current", with no figures: 200, never the story's evidence.
  it.each(actors)('%s: verifying a sheet that names it answers not current and shows nothing of it', async (actor) => {
    const x = scope();
    const res = await sessions[actor].agent.get(`/api/public/verify/parts/${x.partId}?story=${x.storyId}&rev=${x.revision}`).expect(200);
    expect(res.body).toMatchObject({ current: false, sheet: null, entries: [{ storyId: x.storyId, printedRevision: x.revision, currentRevision: null, current: false }] });
  });

  it.each(actors)('%s: the public lists, the builder profile and the feeds leave it out', async (actor) => {
    const x = scope();
    const { agent } = sessions[actor];
    const list = await agent.get(`/api/public/stories?builder=${fx.published.ownerLogin}&limit=50`).expect(200);
    const ids = (list.body.items as { storyId: number }[]).map((i) => i.storyId);
    // The published story is there, so leaving this one out is the rule, not an empty list.
    expect(ids).toContain(fx.published.storyId);
    expect(ids).not.toContain(x.storyId);
    const profile = await agent.get(`/api/public/builders/${fx.published.ownerLogin}`).expect(200);
    const builds = (profile.body.builds as { id: number }[]).map((b) => b.id);
    expect(builds).toContain(fx.published.buildId);
    expect(builds).not.toContain(x.buildId);
    for (const feed of ['/feeds/stories.atom', `/feeds/builders/${fx.published.ownerLogin}.atom`]) {
      const res = await agent.get(feed).expect(200);
      expect(res.text, feed).toContain(fx.published.title);
      expect(res.text, feed).not.toContain(x.title);
    }
  });
});
