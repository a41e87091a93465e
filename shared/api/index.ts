/** The HTTP contract between api/ and web/: one zod schema per request body and response. */
export * from './errors.js';
export * from './auth.js';
export * from './labs.js';
export * from './runs.js';
export * from './series.js';
export * from './uploads.js';
export * from './artifacts.js';
export * from './estimates.js';
export * from './figures.js';
export * from './admin.js';
export * from './dev.js';
export * from './health.js';
export * from './credits.js';
