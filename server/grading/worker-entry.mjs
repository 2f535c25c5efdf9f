// The grading worker thread's entry, in plain JavaScript so that a worker can
// load it with no loader: it loads the TypeScript worker through tsx's API
// (tsx given to the server as a Node option does not reach worker threads on
// Node 20). When tsx is missing the import fails before the worker is ready,
// and the pool grades in the request's thread instead.
import { tsImport } from 'tsx/esm/api';

await tsImport('./worker.ts', import.meta.url);
