import type { SurfaceReply, SurfaceRequest } from './surface-protocol';
import { labelBoxes, labelSurface } from './surface-mesh';

/**
 * Contours the requested labels one per task, reporting each surface as it is ready. Used by
 * the surface worker and, when no worker can start, on the page.
 */
export function runSurfaceBatch(
  request: SurfaceRequest,
  reply: (message: SurfaceReply, transfer: Transferable[]) => void,
  isCancelled: () => boolean = () => false,
): void {
  const startedAt = performance.now();
  const boxes = labelBoxes(request.labels, request.geometry.dimensions);
  const pending = [...request.labelValues];
  const next = () => {
    if (isCancelled()) return;
    const labelValue = pending.shift();
    if (labelValue === undefined) {
      reply({ type: 'surfaces-done', totalMs: performance.now() - startedAt }, []);
      return;
    }
    try {
      const box = boxes.get(labelValue);
      const started = performance.now();
      const mesh = box ? labelSurface(request.labels, request.geometry, labelValue, box) : null;
      if (mesh) {
        reply({ type: 'surface', mesh, computeMs: performance.now() - started }, [
          mesh.pointsLps.buffer,
          mesh.normals.buffer,
          mesh.polys.buffer,
        ]);
      } else {
        reply({ type: 'empty', labelValue }, []);
      }
    } catch (error) {
      reply(
        { type: 'failed', message: error instanceof Error ? error.message : String(error) },
        [],
      );
      return;
    }
    setTimeout(next, 0);
  };
  next();
}
