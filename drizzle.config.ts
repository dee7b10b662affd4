import { defineConfig } from 'drizzle-kit';

// Generates SQL migrations from the schema into drizzle/. It never connects to a database:
// migrations are applied in-process at start-up (server/db/client.ts).
export default defineConfig({
  dialect: 'postgresql',
  schema: './server/db/schema/index.ts',
  out: './drizzle',
});
