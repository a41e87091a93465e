/** The HTTP contract between api/ and web/: one zod schema per request body and response. */
export * from './errors.js';
export * from './auth.js';
export * from './labs.js';
export * from './runs.js';
export * from './figures.js';
export * from './admin.js';
export * from './dev.js';
export * from './health.js';
