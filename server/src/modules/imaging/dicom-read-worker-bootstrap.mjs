// Starts the TypeScript reading worker when the server runs from its sources under tsx. On
// Node 20 a worker thread does not get the `--import tsx` loader of its parent (measured with
// tsx 4.23 on Node 20.20, whatever execArgv says), so the worker registers tsx itself.
import { register } from 'tsx/esm/api';

register();
await import('./dicom-read.worker.ts');
