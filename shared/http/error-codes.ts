/**
 * Every error code the API sends in its error body (`{ error: { code, message, details } }`).
 * The server's `AppError` takes only these, and the client compares against them, so renaming
 * one is a type error on both sides rather than a dialog that silently stops matching.
 */
export const errorCodes = [
  // Requests and access
  'bad_request',
  'invalid_request',
  'unauthorized',
  'forbidden',
  'csrf_invalid',
  'not_found',
  'rate_limited',
  'too_large',
  'invalid_token',
  'internal',
  // The server's own state
  'database_unavailable',
  'database_unreachable',
  'storage_full',
  'storage_unwritable',
  'mail_capture_unavailable',
  // Editing
  'conflict',
  'edit_conflict',
  'key_taken',
  'reading_cited',
  'clearance_cited',
  'reading_in_use',
  'instrument_in_use',
  'moment_in_use',
  'clip_in_use',
  'part_in_use',
  'last_admin',
  'cannot_follow_self',
  // Clips and uploads
  'clip_busy',
  'clip_not_ready',
  'too_many_clips',
  'too_many_uploads',
  'too_many_images',
  'empty_file',
  'not_a_video',
  'no_video_stream',
  'zero_duration',
  'damaged_video',
  'too_long',
  'not_an_image',
  'damaged_image',
  'image_too_large',
  'no_frame',
  'tus_version',
  'upload_busy',
  'upload_expired',
  'upload_offset_mismatch',
  // Review and publishing
  'claim_not_held',
  'claimed_by_other',
  'story_not_in_review',
  'story_not_draft',
  'not_allowed_from_state',
  'nothing_public',
  'state_mismatch',
  'reason_required',
  'not_a_flag',
  'submit_blocked',
  'publish_blocked',
  'withdrawn_by_moderator',
  'flagged',
  'unchecked',
] as const;

/** An error code the API sends. */
export type ErrorCode = (typeof errorCodes)[number];

/** Whether a string is one of the API's error codes. */
export function isErrorCode(x: unknown): x is ErrorCode {
  return typeof x === 'string' && (errorCodes as readonly string[]).includes(x);
}
