import { createDb } from '../../src/lib/server/db/client';

/** A variable `npm test` sets; a clear error when a test is run outside it. */
export function testEnv(name: string): string {
	const value = process.env[name];
	if (!value) throw new Error(`${name} is not set: run the tests through \`npm test\` (it starts the services)`);
	return value;
}

/** The throwaway test database (seeded with the demo scenario). */
export function testDb() {
	return createDb(testEnv('DATABASE_URL'), 5);
}
