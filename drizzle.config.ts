import { defineConfig } from 'drizzle-kit';

// Migrations are generated from drizzle/schema.ts into drizzle/ and committed.
export default defineConfig({
  dialect: 'postgresql',
  schema: './drizzle/schema.ts',
  out: './drizzle',
  dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:15432/toppleworks' },
});
