import { describe, expect, it } from 'vitest';
import { errorCodes, isErrorCode } from '../../../shared/http/error-codes';
import { apiErrorFromBody } from '../../../src/lib/api';

/* One list of the API's error codes, shared by the server's AppError and the client. */

describe('error codes', () => {
  it('are listed once each, in snake case', () => {
    expect(new Set(errorCodes).size).toBe(errorCodes.length);
    for (const code of errorCodes) expect(code).toMatch(/^[a-z]+(_[a-z]+)*$/);
  });

  it('reach the client as sent, and a code this client does not know is named by the status', () => {
    expect(isErrorCode('edit_conflict')).toBe(true);
    expect(isErrorCode('made_up_later')).toBe(false);
    const known = apiErrorFromBody(409, { code: 'edit_conflict', message: 'Someone else saved first.', details: [] });
    expect([known.status, known.code, known.message]).toEqual([409, 'edit_conflict', 'Someone else saved first.']);
    const unknown = apiErrorFromBody(422, { code: 'made_up_later', message: 'A newer server says so.', details: [{ path: 'x', message: 'bad' }] });
    expect([unknown.code, unknown.message, unknown.details]).toEqual(['http_422', 'A newer server says so.', [{ path: 'x', message: 'bad' }]]);
  });
});
