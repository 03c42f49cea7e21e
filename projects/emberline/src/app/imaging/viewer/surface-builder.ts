import { runSurfaceBatch } from './surface-batch';
import type { SurfaceReply, SurfaceRequest } from './surface-protocol';

function startWorker(): Worker | null {
  if (typeof Worker === 'undefined') return null;
  try {
    return new Worker(new URL('./surface.worker', import.meta.url), { type: 'module' });
  } catch {
    return null;
  }
}

/**
 * Builds the 3D view's surfaces in the surface worker, or on the page between frames when no
 * worker starts. Replies arrive through `onReply`, one surface at a time.
 */
export class SurfaceBuilder {
  private readonly worker = startWorker();
  private isDisposed = false;

  constructor(private readonly onReply: (reply: SurfaceReply) => void) {
    this.worker?.addEventListener('message', (event: MessageEvent<SurfaceReply>) => {
      if (!this.isDisposed) this.onReply(event.data);
    });
    this.worker?.addEventListener('error', (event: ErrorEvent) => {
      if (!this.isDisposed) {
        this.onReply({ type: 'failed', message: event.message || 'The surface worker stopped.' });
      }
    });
  }

  build(request: SurfaceRequest): void {
    if (this.worker) {
      // A copy travels: the page keeps its label map for the slice views.
      this.worker.postMessage(request);
      return;
    }
    setTimeout(() =>
      runSurfaceBatch(
        request,
        (reply) => !this.isDisposed && this.onReply(reply),
        () => this.isDisposed,
      ),
    );
  }

  dispose(): void {
    this.isDisposed = true;
    this.worker?.terminate();
  }
}
