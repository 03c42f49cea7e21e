/**
 * The surface worker: marching cubes for the 3D view off the page's thread. Typed with the
 * page's DOM library (the app has one tsconfig); `postMessage(message, transfer)` matches a
 * dedicated worker's.
 */
import { runSurfaceBatch } from './surface-batch';
import type { SurfaceReply, SurfaceRequest } from './surface-protocol';

let generation = 0;

addEventListener('message', (event: MessageEvent<SurfaceRequest>) => {
  const current = ++generation;
  runSurfaceBatch(
    event.data,
    (message: SurfaceReply, transfer: Transferable[]) => postMessage(message, { transfer }),
    () => current !== generation,
  );
});
