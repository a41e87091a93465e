/// <reference types="vitest/config" />
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

// The web app lives in web/, its entry is the top-level index.html; the API serves dist/.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  build: { outDir: 'dist', emptyOutDir: true },
  server: { proxy: { '/api': 'http://127.0.0.1:5180', '/tiles': 'http://127.0.0.1:5180' } },
  test: {
    include: ['tests/**/*.test.ts', 'renderer/**/*.test.ts', 'api/**/*.test.ts', 'shared/**/*.test.ts', 'web/**/*.test.ts'],
    exclude: ['node_modules', 'dist', 'build', '.local'],
    testTimeout: 30_000,
    hookTimeout: 60_000,
  },
});
