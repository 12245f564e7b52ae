/** Projects that stock is issued to and reserved for. */
import { asc } from 'drizzle-orm';
import type { DbOrTx } from '$lib/server/db';
import { projects } from '$lib/server/db/schema';

export async function listProjects(db: DbOrTx) {
	return db.select({ id: projects.id, code: projects.code, name: projects.name }).from(projects).orderBy(asc(projects.code));
}
