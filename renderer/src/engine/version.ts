/** Bumped whenever any output for the same specification could change (recorded in export sidecars). */
export const ENGINE_VERSION = '1.0.0';
