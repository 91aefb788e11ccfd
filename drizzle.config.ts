import { defineConfig } from 'drizzle-kit';

// `npm run db:generate` compares the schema with the committed migrations and writes new SQL
// into drizzle/. It does not need a database; applying migrations is `npm run db:migrate`.
export default defineConfig({
	dialect: 'postgresql',
	schema: './src/lib/server/db/schema/index.ts',
	out: './drizzle',
	strict: true,
	verbose: true
});
