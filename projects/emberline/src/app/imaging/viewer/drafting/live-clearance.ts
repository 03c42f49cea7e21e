import { ClearanceComputation } from './clearance-computation';
import type {
  ClearanceLoad,
  ClearanceReply,
  ClearanceRequest,
  PathRequest,
} from './clearance-protocol';

/** The part of a Worker the clearance client uses. */
export interface ClearanceWorkerPort {
  postMessage(message: ClearanceRequest): void;
  addEventListener(type: 'message', listener: (event: MessageEvent<ClearanceReply>) => void): void;
  addEventListener(type: 'error', listener: (event: ErrorEvent) => void): void;
  terminate(): void;
}

function startWorker(): ClearanceWorkerPort | null {
  if (typeof Worker === 'undefined') return null;
  try {
    return new Worker(new URL('./clearance.worker', import.meta.url), { type: 'module' });
  } catch {
    return null;
  }
}

/**
 * The viewer's side of the live clearance: loads a label map into the worker (or, without one,
 * computes on the page one kind per task), then measures paths. Only the newest measurement
 * waits while one is being answered, so that dragging never queues stale work.
 */
export class LiveClearance {
  private readonly worker: ClearanceWorkerPort | null;
  private local: ClearanceComputation | null = null;
  private nextRequestId = 1;
  private inFlight = false;
  private waiting: PathRequest[] | null = null;
  private isDisposed = false;

  constructor(
    private readonly onReply: (reply: ClearanceReply) => void,
    createWorker: () => ClearanceWorkerPort | null = startWorker,
  ) {
    this.worker = createWorker();
    this.worker?.addEventListener('message', (event) => this.received(event.data));
    this.worker?.addEventListener('error', (event) =>
      this.received({ type: 'failed', message: event.message || 'The clearance worker stopped.' }),
    );
  }

  /** Whether the fields are computed off the page (false: on the page, between frames). */
  get usesWorker(): boolean {
    return this.worker !== null;
  }

  load(input: Omit<ClearanceLoad, 'type'>): void {
    if (this.worker) {
      this.worker.postMessage({ type: 'load', ...input });
      return;
    }
    const computation = new ClearanceComputation(input);
    this.local = computation;
    const startedAt = performance.now();
    const step = () => {
      if (this.isDisposed || this.local !== computation) return;
      try {
        const done = computation.computeNext();
        if (done) this.received({ type: 'kind-ready', ...done });
        if (computation.isDone) {
          this.received({ type: 'fields-ready', totalMs: performance.now() - startedAt });
          return;
        }
      } catch (error) {
        this.received({
          type: 'failed',
          message: error instanceof Error ? error.message : String(error),
        });
        return;
      }
      setTimeout(step, 0);
    };
    setTimeout(step, 0);
  }

  /** Asks for the figures of these paths; the answer arrives as a `figures` reply. */
  measure(paths: PathRequest[]): void {
    if (this.inFlight) {
      this.waiting = paths;
      return;
    }
    this.send(paths);
  }

  dispose(): void {
    this.isDisposed = true;
    this.local = null;
    this.worker?.terminate();
  }

  private send(paths: PathRequest[]): void {
    const requestId = this.nextRequestId++;
    this.inFlight = true;
    if (this.worker) {
      this.worker.postMessage({ type: 'measure', requestId, paths });
      return;
    }
    const computation = this.local;
    queueMicrotask(() => {
      if (this.isDisposed) return;
      this.received({ type: 'figures', requestId, figures: computation?.figures(paths) ?? [] });
    });
  }

  private received(reply: ClearanceReply): void {
    if (this.isDisposed) return;
    if (reply.type === 'figures') {
      this.inFlight = false;
      const waiting = this.waiting;
      this.waiting = null;
      if (waiting) this.send(waiting);
    }
    this.onReply(reply);
  }
}
