import { defineConfig } from 'drizzle-kit';

// Generating migrations needs no database; `drizzle-kit migrate` is never run against a live
// data folder because PGlite does not lock it (the app migrates itself at start).
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'postgresql',
	driver: 'pglite',
	dbCredentials: { url: process.env.DATA_DIR ?? './data/drizzle-kit' },
	strict: true,
	verbose: true
});
