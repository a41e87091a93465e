/// <reference types="vitest/config" />
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';
import { profileFor } from './infra/lib/profile.js';

/**
 * Run on their own, after all the others: files that compare a whole table (or the shared bucket's
 * uploads/) before and after a request to prove that nothing was stored, which another file writing
 * at the same moment would break; and the resume test, whose worker must renew a 2 s job lock on time
 * (beside another file's work it missed the renewals, and BullMQ gave the run up as stalled).
 */
const EXCLUSIVE = [
  'tests/api/bad-input.test.ts', // count of all labs
  'tests/api/credits.test.ts', // count of all credit purchases
  'tests/api/uploads.test.ts', // all background uploads, all objects under uploads/
  'tests/security/access.test.ts', // count of all ledger entries
  'tests/faults/object-store-outage.test.ts', // all background uploads
  'tests/farm/resume.test.ts', // a 2 s lock held through a kill and two restarts
];

const TEST_FILES = {
  include: ['tests/**/*.test.ts', 'renderer/**/*.test.ts', 'api/**/*.test.ts', 'shared/**/*.test.ts', 'web/**/*.test.ts'],
  exclude: ['node_modules', 'dist', 'build', '.local'],
  testTimeout: 30_000,
  hookTimeout: 60_000,
};

// The web app lives in web/, its entry is the top-level index.html; the API serves dist/.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: { outDir: 'dist', emptyOutDir: true },
  // `npx vite` beside `npm start`: the API (tiles and IIIF included) answers on the dev profile's port
  server: { proxy: { '/api': `http://127.0.0.1:${profileFor('dev').ports.api}` } },
  test: {
    projects: [
      {
        // Two files at a time on two cores: vitest's default (cores - 1) ran one, while most files
        // spend their time waiting on services, workers, browsers and child processes. Each file
        // has its own e-mail tag, lab names, BullMQ prefix (or database), so files never meet.
        test: { ...TEST_FILES, name: 'shared', exclude: [...TEST_FILES.exclude, ...EXCLUSIVE], maxWorkers: 2, sequence: { groupOrder: 0 } },
      },
      { test: { ...TEST_FILES, name: 'exclusive', include: EXCLUSIVE, maxWorkers: 1, sequence: { groupOrder: 1 } } },
    ],
  },
});
