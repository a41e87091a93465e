import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { drizzle } from 'drizzle-orm/node-postgres';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import pg from 'pg';
import { loadEnv } from '../../../shared/env.js';

/** The committed migrations, found relative to this file so the working directory does not matter. */
export const MIGRATIONS_FOLDER = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../../drizzle');

/** Any fixed number; processes migrating the same database at once take turns on it. */
const MIGRATION_LOCK = 7461625;

/** Apply every migration in ./drizzle not yet recorded in drizzle.__drizzle_migrations. */
export async function migrateDatabase(databaseUrl: string): Promise<void> {
  // One connection, so the session-level advisory lock covers every statement of the migrator.
  const client = new pg.Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    await client.query('select pg_advisory_lock($1)', [MIGRATION_LOCK]);
    await migrate(drizzle(client), { migrationsFolder: MIGRATIONS_FOLDER });
  } finally {
    await client.end(); // ending the session releases the lock
  }
}

// `tsx api/src/db/migrate.ts` migrates the database named by DATABASE_URL.
if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const env = loadEnv();
  migrateDatabase(env.DATABASE_URL).then(
    () => console.log('migrations applied'),
    (err: unknown) => {
      console.error(`migration failed: ${err instanceof Error ? err.message : String(err)}`);
      process.exit(1);
    },
  );
}
