import { defineConfig } from 'drizzle-kit';

// Migrations are generated from the schema (`npm run db:generate`) and committed under drizzle/.
// drizzle-kit generate needs no database; the app applies them at start with the migrator.
export default defineConfig({
	dialect: 'mysql',
	schema: './src/lib/server/db/schema/index.ts',
	out: './drizzle',
	casing: 'snake_case',
	dbCredentials: { url: process.env.DATABASE_URL ?? 'mysql://glasscrib@127.0.0.1:3307/glasscrib' }
});
