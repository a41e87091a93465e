/** The shared HTTP contract (zod schemas and types), re-exported so pages import from one place. */
export * from '../../../shared/api/index.js';
export * from '../../../shared/run-spec.js';
