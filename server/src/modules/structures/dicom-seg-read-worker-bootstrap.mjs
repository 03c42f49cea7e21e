// Starts the TypeScript SEG reading worker when the server runs from its sources under tsx. On
// Node 20 a worker thread does not get the `--import tsx` loader of its parent (see
// ../imaging/dicom-read-worker-bootstrap.mjs), so it registers tsx itself — with the checkout's
// tsconfig named, so that `@emberline/shared` resolves whatever the working directory.
import { fileURLToPath } from 'node:url';
import { register } from 'tsx/esm/api';

register({ tsconfig: fileURLToPath(new URL('../../../../tsconfig.json', import.meta.url)) });
await import('./dicom-seg-read.worker.ts');
