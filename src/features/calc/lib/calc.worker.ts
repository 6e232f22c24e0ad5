/**
 * The calculator's engine, off the page's thread, so a big Monte Carlo run never blocks typing.
 * Receives the raw request, validates it with the server's schema, and answers with the API's
 * response (plain JSON) and the page's extras, or the problems by field.
 */
import type { CalcWorkerReply, CalcWorkerRequest } from './calc-view';
import { workOut } from './work-out';

// The project's types are the DOM's; this is the part of a dedicated worker's scope used here.
const scope = self as unknown as {
  addEventListener(type: 'message', listener: (event: MessageEvent<CalcWorkerRequest>) => void): void;
  postMessage(message: CalcWorkerReply): void;
};

scope.addEventListener('message', (event) => {
  const { id, input, options } = event.data;
  scope.postMessage({ id, ...workOut(input, options ?? {}) });
});
