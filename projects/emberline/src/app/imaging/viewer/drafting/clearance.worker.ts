/**
 * The clearance worker: distance fields off the page's thread. A load replaces any earlier
 * one; the kinds are computed one per task so that measurements interleave. Typed with the
 * page's DOM library (the app has one tsconfig): `postMessage(message)` and the `message`
 * listener have the same shape in a dedicated worker.
 */
import { ClearanceComputation } from './clearance-computation';
import type { ClearanceReply, ClearanceRequest } from './clearance-protocol';

let computation: ClearanceComputation | null = null;

function reply(message: ClearanceReply): void {
  postMessage(message);
}

function continueComputing(current: ClearanceComputation, startedAt: number): void {
  if (current !== computation) return;
  try {
    const done = current.computeNext();
    if (done) reply({ type: 'kind-ready', ...done });
    if (current.isDone) {
      reply({ type: 'fields-ready', totalMs: performance.now() - startedAt });
      return;
    }
  } catch (error) {
    reply({ type: 'failed', message: error instanceof Error ? error.message : String(error) });
    return;
  }
  setTimeout(() => continueComputing(current, startedAt), 0);
}

addEventListener('message', (event: MessageEvent<ClearanceRequest>) => {
  const request = event.data;
  if (request.type === 'load') {
    const startedAt = performance.now();
    computation = new ClearanceComputation(request);
    setTimeout(() => continueComputing(computation as ClearanceComputation, startedAt), 0);
  } else {
    const figures = computation ? computation.figures(request.paths) : [];
    reply({ type: 'figures', requestId: request.requestId, figures });
  }
});
