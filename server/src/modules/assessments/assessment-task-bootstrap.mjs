// Starts the TypeScript assessment task under tsx when the server runs from its sources: on
// Node 20 a worker thread does not get its parent's `--import tsx` (measured with tsx 4.23 on
// Node 20.20), so the worker registers tsx itself and hands piscina the task's default export.
import { register } from 'tsx/esm/api';

register();
const task = await import('./assessment.task.ts');
export default task.default;
