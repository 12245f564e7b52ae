// Applies the committed Drizzle migrations in drizzle/ to DATABASE_URL.
import { drizzle } from 'drizzle-orm/mysql2';
import { migrate } from 'drizzle-orm/mysql2/migrator';
import mysql from 'mysql2/promise';

export async function applyMigrations(url) {
	const connection = await mysql.createConnection({ uri: url, multipleStatements: true });
	try {
		await migrate(drizzle(connection), { migrationsFolder: new URL('../drizzle', import.meta.url).pathname });
	} finally {
		await connection.end();
	}
}

if (import.meta.url === `file://${process.argv[1]}`) {
	const url = process.env.DATABASE_URL;
	if (!url) {
		console.error('DATABASE_URL is not set');
		process.exit(1);
	}
	await applyMigrations(url);
	console.log('migrations applied');
}
