/** Header the client sends its CSRF token in on every state-changing request. */
export const csrfHeaderName = 'x-csrf-token';
